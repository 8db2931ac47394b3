#!/usr/bin/env python3
"""Writes the seed corpus under corpus/<target>/ and the reproducers of
service bugs found by fuzzing under regressions/<target>/ (run from
anywhere).

Each seed is a hand-encoded protobuf request (wire format: varints, 64-bit
doubles, length-delimited strings and messages), prefixed by the target's
selector byte where the target has one (see fuzz_targets/*.rs). The values
are invented demo inputs, some valid and some refused (NaN, infinity, junk
unit codes, out-of-range values), so that fuzzing starts from every branch.
Only the standard library is used.
"""

import math
import os
import struct

HERE = os.path.dirname(os.path.abspath(__file__))


def varint(n):
    n &= (1 << 64) - 1
    out = bytearray()
    while True:
        byte = n & 0x7F
        n >>= 7
        if n:
            out.append(byte | 0x80)
        else:
            out.append(byte)
            return bytes(out)


def key(number, wire_type):
    return varint((number << 3) | wire_type)


def double(number, value):
    return key(number, 1) + struct.pack("<d", value)


def enum(number, value):
    return key(number, 0) + varint(value)


def nested(number, payload):
    return key(number, 2) + varint(len(payload)) + payload


def string(number, text):
    return nested(number, text.encode())


def quantity(number, value, unit):
    return nested(number, double(1, value) + string(2, unit))


def conditions(number, ph=None, pco2=None, temperature=None, dpg=None, cohb=None):
    body = b""
    if ph is not None:
        body += double(1, ph)
    if pco2 is not None:
        body += quantity(2, *pco2)
    if temperature is not None:
        body += quantity(3, *temperature)
    if dpg is not None:
        body += quantity(4, *dpg)
    if cohb is not None:
        body += quantity(6, *cohb)
    return nested(number, body)


def hill(number, p50, n):
    return nested(number, quantity(1, p50, "mm[Hg]") + double(2, n))


ACIDOTIC = dict(ph=7.2, pco2=(55.0, "mm[Hg]"), temperature=(39.0, "Cel"))

SEEDS = {
    "saturation": {
        # selector 0: one SaturationFromTensionRequest
        "default": b"\x00" + quantity(1, 60.0, "mm[Hg]"),
        "acidotic-kelman": b"\x00" + quantity(1, 8.0, "kPa") + conditions(2, **ACIDOTIC) + enum(3, 2),
        "hill": b"\x00" + quantity(1, 40.0, "mm[Hg]") + enum(3, 3) + hill(4, 26.8, 2.7),
        "dash-si": b"\x00" + quantity(1, 5.3, "kPa") + conditions(2, dpg=(6.0, "mmol/L")) + enum(3, 6) + enum(5, 2),
        "adair-cohb": b"\x00" + quantity(1, 100.0, "mm[Hg]") + conditions(2, cohb=(10.0, "%")) + enum(3, 4),
        "nan": b"\x00" + quantity(1, math.nan, "mm[Hg]"),
        "junk-unit": b"\x00" + quantity(1, 60.0, "mmHg") + enum(3, 99),
        # selector 1: BatchSaturationFromTensionRequest
        "batch": b"\x01"
        + nested(1, quantity(1, 27.0, "mm[Hg]"))
        + nested(1, quantity(1, -1.0, "mm[Hg]"))
        + nested(1, quantity(1, 90.0, "mm[Hg]") + enum(3, 5)),
        "batch-empty": b"\x01",
    },
    "tension": {
        "default": b"\x00" + double(1, 0.9),
        "plateau-severinghaus": b"\x00" + double(1, 0.995) + conditions(2, **ACIDOTIC) + enum(3, 1),
        "hill-si": b"\x00" + double(1, 0.5) + enum(3, 3) + hill(4, 30.0, 2.5) + enum(5, 2),
        "dash": b"\x00" + double(1, 0.3) + enum(3, 6),
        "siggaard-andersen": b"\x00" + double(1, 0.75) + conditions(2, ph=7.5) + enum(3, 5),
        "one": b"\x00" + double(1, 1.0),
        "inf": b"\x00" + double(1, math.inf) + conditions(2, ph=9.0),
        "batch": b"\x01"
        + nested(1, double(1, 0.5))
        + nested(1, double(1, 0.0))
        + nested(1, double(1, 0.97) + enum(3, 4)),
        "batch-empty": b"\x01",
    },
    "curve": {
        "default": b"",
        "two-sets-log": conditions(1, **ACIDOTIC)
        + conditions(1, ph=7.6)
        + quantity(4, 0.5, "kPa")
        + quantity(5, 20.0, "kPa")
        + enum(6, 50)
        + enum(7, 2)
        + enum(8, 2),
        "dash": enum(2, 6) + enum(6, 30),
        "hill": enum(2, 3) + hill(3, 26.8, 2.7) + enum(6, 10),
        "reversed": quantity(4, 100.0, "mm[Hg]") + quantity(5, 10.0, "mm[Hg]"),
        "one-point": enum(6, 1) + enum(8, 7),
    },
    "conditions": {
        # selector 0: ShiftFactorsRequest
        "shift": b"\x00" + conditions(1, **ACIDOTIC) + enum(2, 1),
        "shift-dash-si": b"\x00" + conditions(1, dpg=(3.0, "mmol/L"), pco2=(6.0, "kPa")) + enum(2, 6) + enum(3, 2),
        "shift-bad-ph": b"\x03" + conditions(1, ph=5.0, temperature=(98.6, "[degF]")),
        # selector 1: EstimateP50Request
        "p50-single": b"\x01" + nested(1, quantity(1, 30.0, "mm[Hg]") + double(2, 0.6)),
        "p50-fit": b"\x01"
        + nested(1, quantity(1, 20.0, "mm[Hg]") + double(2, 0.32))
        + nested(1, quantity(1, 35.0, "mm[Hg]") + double(2, 0.67) + conditions(3, ph=7.3))
        + nested(1, quantity(1, 5.0, "kPa") + double(2, 0.7)),
        "p50-empty": b"\x01",
        # selector 2: CorrectForTemperatureRequest
        "temperature": b"\x02"
        + double(1, 7.35)
        + quantity(2, 45.0, "mm[Hg]")
        + quantity(3, 80.0, "mm[Hg]")
        + quantity(5, 33.0, "Cel"),
        "temperature-si": b"\x02" + quantity(3, 10.0, "kPa") + quantity(4, 37.0, "Cel") + quantity(5, 104.0, "[degF]") + enum(6, 2),
        "temperature-nothing": b"\x02" + quantity(5, 30.0, "C"),
    },
    "transport": {
        # selector 0: OxygenContentRequest
        "content": b"\x00"
        + quantity(1, 14.0, "g/dL")
        + nested(2, double(1, 0.97) + quantity(2, 95.0, "mm[Hg]"))
        + nested(3, double(1, 0.72) + quantity(2, 40.0, "mm[Hg]"))
        + quantity(4, 5.0, "L/min"),
        "content-from-po2-si": b"\x00"
        + quantity(1, 140.0, "g/L")
        + nested(2, quantity(2, 12.0, "kPa") + conditions(6, ph=7.3) + enum(7, 2))
        + enum(6, 2),
        "content-fractional": b"\x00"
        + quantity(1, 9.0, "mmol/L")
        + nested(2, double(1, 0.9) + enum(3, 2) + quantity(4, 5.0, "%") + quantity(5, 2.0, "%"))
        + double(5, 1.34),
        "content-bad": b"\x00" + quantity(1, math.inf, "g/dL") + nested(2, double(1, 1.5)),
        # selector 1: GasExchangeRequest
        "gas": b"\x01"
        + quantity(1, 40.0, "%")
        + quantity(3, 40.0, "mm[Hg]")
        + quantity(4, 85.0, "mm[Hg]")
        + double(6, 0.94)
        + quantity(7, 12.0, "cm[H2O]")
        + quantity(8, 12.0, "g/dL")
        + nested(9, double(1, 0.7) + quantity(2, 38.0, "mm[Hg]")),
        "gas-si-simplified": b"\x01"
        + quantity(1, 0.21, "1")
        + quantity(2, 100.0, "kPa")
        + quantity(3, 5.3, "kPa")
        + quantity(4, 11.0, "kPa")
        + double(5, 0.85)
        + quantity(10, 38.5, "Cel")
        + enum(11, 2)
        + enum(13, 2),
        "gas-bad": b"\x01" + quantity(1, 150.0, "%") + double(6, math.nan),
    },
    "consistency": {
        # selector 0: CheckBloodGasRequest, sample = field 1 (BloodGasResults)
        "normal-arterial": b"\x00"
        + nested(
            1,
            quantity(1, 94.0, "mm[Hg]")
            + quantity(2, 39.0, "mm[Hg]")
            + double(3, 7.41)
            + quantity(4, 36.8, "Cel")
            + enum(6, 1)
            + double(7, 0.968)
            + quantity(9, 1.2, "%")
            + quantity(10, 0.6, "%")
            + quantity(11, 13.9, "g/dL")
            + double(13, 0.97)
            + quantity(14, 21.0, "%")
            + quantity(15, 752.0, "mm[Hg]")
            + quantity(16, 25.4, "mmol/L")
            + enum(17, 2)
            + quantity(18, 7.8, "10*9/L")
            + nested(19, double(1, 7.41) + quantity(2, 39.0, "mm[Hg]") + quantity(3, 94.0, "mm[Hg]")),
        ),
        "air-uncertainty-rule-si": b"\x00"
        + nested(1, quantity(1, 16.1, "kPa") + quantity(2, 4.1, "kPa") + double(3, 7.47) + enum(6, 1) + double(13, 0.91) + quantity(14, 0.21, "1"))
        # uncertainty = field 2 (ConsistencyUncertainty): inputs = 4
        # (InputUncertainty: field 1, standard_uncertainty 2, bound 3,
        # profile_id 4), profile_sets = 5, no_built_in_figures = 2,
        # coverage_probability = 3
        + nested(
            2,
            nested(4, string(1, "sample.spo2_fraction") + nested(2, quantity(1, 2.0, "%")))
            + nested(4, string(1, "sample.po2") + string(4, "clia-2024-po2"))
            + nested(4, string(1, "sample.fio2") + nested(3, nested(1, quantity(1, 2.0, "%")) + enum(2, 3)))
            + string(5, "analytical-goal-harding-fraser-1987")
            + double(3, 0.99),
        )
        + enum(3, 2)
        + enum(5, 2),
        "patient-temperature-fractional": b"\x00"
        + nested(
            1,
            quantity(1, 61.0, "mm[Hg]")
            + quantity(2, 33.6, "mm[Hg]")
            + double(3, 7.46)
            + quantity(4, 33.0, "Cel")
            + enum(5, 2)
            + double(7, 0.86)
            + enum(8, 2)
            + quantity(9, 0.05, "1")
            + quantity(10, 0.01, "1")
            + quantity(11, 9.0, "mmol/L")
            + nested(19, double(1, 7.40) + quantity(2, 40.0, "mm[Hg]") + quantity(3, 80.0, "mm[Hg]")),
        )
        + enum(4, 7),
        "bad": b"\x00" + nested(1, quantity(1, math.nan, "mmHg") + double(3, 9.2) + quantity(16, 24.0, "mmol/L") + enum(5, 2)),
        "bad-figures": b"\x00"
        + nested(1, quantity(1, 80.0, "mm[Hg]") + double(3, 7.4) + double(13, 0.95))
        + nested(
            2,
            nested(4, string(1, "sample.temperature") + nested(2, quantity(1, 0.1, "Cel")))
            + nested(4, string(1, "sample.spo2_fraction") + nested(3, nested(1, quantity(1, 0.02, "1")) + enum(2, 2) + double(4, 1e-300)))
            + nested(4, string(1, "sample.results_at_37_cel.ph") + string(4, "clia-2024-po2"))
            + string(5, "no-such-set")
            + enum(2, 1)
            + double(3, math.inf),
        ),
        # selector 1: BatchCheckBloodGasRequest, requests = field 1
        "batch": b"\x01"
        + nested(1, nested(1, quantity(1, 38.0, "mm[Hg]") + double(3, 7.36) + enum(6, 1) + double(7, 0.71) + double(13, 0.96)))
        + nested(1, nested(1, quantity(1, -3.0, "mm[Hg]"))),
        "batch-empty": b"\x01",
    },
}


# Minimal reproducers of bugs found by fuzzing (README.md, "Bugs found"):
# each must pass once the service is fixed, and keeps passing after.
REGRESSIONS = {
    "saturation": {
        # Dash 2016 at the smallest positive PO2: hill_slope = -inf.
        "dash-subnormal-po2": b"\x00" + quantity(1, 5e-324, "mm[Hg]") + enum(3, 6),
        # Adair at the smallest positive PO2: hill_slope = NaN.
        "adair-subnormal-po2": b"\x00" + quantity(1, 5e-324, "mm[Hg]") + enum(3, 4),
        # Hill with P50 = 1e-200 mm[Hg] (> 0, accepted): saturation_fraction = NaN.
        "hill-tiny-p50": b"\x00" + quantity(1, 60.0, "mm[Hg]") + enum(3, 3) + hill(4, 1e-200, 2.7),
    },
    "tension": {
        # Hill with n = 1e-308 (> 0, accepted): po2_change_per_percent = inf.
        "hill-tiny-n": b"\x00" + double(1, 0.5) + enum(3, 3) + hill(4, 30.0, 1e-308),
    },
    "conditions": {
        # EstimateP50, one pair at saturation 1e-312 (> 0, accepted):
        # p50_*_curve_shift = inf.
        "p50-tiny-saturation": b"\x01" + nested(1, quantity(1, 30.0, "mm[Hg]") + double(2, 1e-312)),
    },
    "curve": {
        # Hill with P50 = 1e-279 mm[Hg] (> 0, accepted): every point's
        # saturation_fraction is NaN.
        "hill-tiny-p50": enum(2, 3) + hill(3, 1e-279, 2.7) + enum(6, 5),
    },
}


def write(kind, table):
    for target, inputs in table.items():
        directory = os.path.join(HERE, kind, target)
        os.makedirs(directory, exist_ok=True)
        for name, data in inputs.items():
            with open(os.path.join(directory, name), "wb") as f:
                f.write(data)
    return sum(len(inputs) for inputs in table.values())


def main():
    print(write("corpus", SEEDS), "seeds and", write("regressions", REGRESSIONS), "regression inputs written")


if __name__ == "__main__":
    main()
