"""Every shared vector and the error cases, called through the official
Connect client for Python (connectrpc) with its generated clients: JSON
over HTTP/1.1, binary protobuf over HTTP/2, and the GET form. The Rust
suite (tests/tests/connect_protocol.rs) checks the same server with plain
HTTP, and tests/interop/ the same vectors over gRPC."""

import math

import pytest
from connectrpc.code import Code
from connectrpc.compat import google_protobuf_binary_codec, google_protobuf_json_codec
from connectrpc.errors import ConnectError
from google.protobuf import json_format, message_factory
from google.rpc import code_pb2, error_details_pb2
from pyqwest import HTTPVersion

from conftest import method_attribute
from oxbind_testing import ERROR_DOMAIN, V1_SERVICES, check_expectation, load_vectors

VECTORS = load_vectors()

# How a call travels: (codec, HTTP version, GET form).
MODES = {
    "json-http1": (google_protobuf_json_codec(ignore_unknown_fields=False), HTTPVersion.HTTP1, False),
    "proto-http2": (google_protobuf_binary_codec(), HTTPVersion.HTTP2, False),
    "json-get": (google_protobuf_json_codec(ignore_unknown_fields=False), HTTPVersion.HTTP1, True),
}


def call(generated, address, mode, rpc, request, **options):
    codec, http_version, use_get = MODES[mode]
    service, method = rpc.split("/")
    with generated.client(service, address, codec, http_version) as client:
        return getattr(client, method_attribute(method))(
            request, use_get=use_get, timeout_ms=options.get("timeout_ms", 10_000)
        )


def request_for(generated, rpc, request_json):
    service, method = rpc.split("/")
    descriptor = generated.service_descriptor(service).methods_by_name[method]
    request_class = message_factory.GetMessageClass(descriptor.input_type)
    return json_format.ParseDict(request_json, request_class())


def details(error):
    """The BadRequest violations, as (field, reason), and the ErrorInfo, as
    (reason, domain), of a ConnectError."""
    violations, info = [], None
    for detail in error.details:
        if detail.type_name == "google.rpc.BadRequest":
            bad = error_details_pb2.BadRequest.FromString(detail.message_bytes)
            violations.extend((v.field, v.reason) for v in bad.field_violations)
        elif detail.type_name == "google.rpc.ErrorInfo":
            found = error_details_pb2.ErrorInfo.FromString(detail.message_bytes)
            info = (found.reason, found.domain)
    return violations, info


def check_item_error(name, response, wanted):
    index, field, reason = wanted["index"], wanted["field"], wanted["reason"]
    item = response.results[index]
    assert item.WhichOneof("result") == "error", f"{name}: item {index} computed"
    status = item.error
    assert status.code == code_pb2.INVALID_ARGUMENT, f"{name}: item {index}"
    violations, info = [], None
    for detail in status.details:
        if detail.Is(error_details_pb2.BadRequest.DESCRIPTOR):
            bad = error_details_pb2.BadRequest()
            detail.Unpack(bad)
            violations.extend((v.field, v.reason) for v in bad.field_violations)
        elif detail.Is(error_details_pb2.ErrorInfo.DESCRIPTOR):
            found = error_details_pb2.ErrorInfo()
            detail.Unpack(found)
            info = (found.reason, found.domain)
    assert (field, reason) in violations, f"{name}: item {index}: {violations}"
    assert info == (reason, ERROR_DOMAIN), f"{name}: item {index}: {info}"


@pytest.mark.parametrize("mode", MODES)
@pytest.mark.parametrize("vector", VECTORS, ids=[v["name"] for v in VECTORS])
def test_vector(generated, server_address, vector, mode):
    name = vector["name"]
    assert vector.get("source", "").strip(), f"{name}: no source"
    request = request_for(generated, vector["rpc"], vector["request"])
    if "refused" in vector:
        with pytest.raises(ConnectError) as raised:
            call(generated, server_address, mode, vector["rpc"], request)
        error = raised.value
        assert error.code == Code.INVALID_ARGUMENT, f"{name}: {error.code} {error.message}"
        violations, info = details(error)
        wanted = (vector["refused"]["field"], vector["refused"]["reason"])
        assert wanted in violations, f"{name}: expected {wanted}, got {violations}"
        assert info == (wanted[1], ERROR_DOMAIN), f"{name}: ErrorInfo {info}"
        return
    response = call(generated, server_address, mode, vector["rpc"], request)
    response_json = json_format.MessageToDict(response, always_print_fields_with_no_presence=True)
    expectations = vector.get("expect", [])
    item_errors = vector.get("itemErrors", [])
    assert expectations or item_errors, f"{name}: expects nothing"
    for expectation in expectations:
        check_expectation(name, response_json, expectation)
    for wanted in item_errors:
        check_item_error(name, response, wanted)


def test_vectors_cover_every_rpc_of_the_contract(generated):
    covered = {v["rpc"] for v in VECTORS}
    expected = {
        f"{service}/{method.name}"
        for service in V1_SERVICES
        for method in generated.service_descriptor(service).methods
    }
    assert len(expected) >= 11
    assert expected - covered == set()


@pytest.mark.parametrize("mode", MODES)
def test_a_refused_input_names_each_bad_field(generated, server_address, mode):
    common = generated.common
    pb2 = generated.pb2["oxbind.v1.DissociationService"]
    request = pb2.SaturationFromTensionRequest(
        po2=common.Quantity(value=60, unit="mm[Hg]"),
        conditions=common.BloodConditions(ph=8.6, temperature=common.Quantity(value=47, unit="Cel")),
    )
    with pytest.raises(ConnectError) as raised:
        call(generated, server_address, mode, "oxbind.v1.DissociationService/SaturationFromTension", request)
    error = raised.value
    assert error.code == Code.INVALID_ARGUMENT
    violations, info = details(error)
    # design.md input rules: pH outside 6.0-8.5 is refused; proto/API.md
    # section 4 gives the temperature hard limit.
    fields = {field for field, _ in violations}
    assert {"conditions.ph", "conditions.temperature.value"} <= fields, violations
    assert ("conditions.ph", "PH_OUT_OF_RANGE") in violations
    assert info is not None and info[1] == ERROR_DOMAIN
    # The message a person reads names the first field, never a value.
    assert error.message.startswith("conditions.ph"), error.message
    assert "8.6" not in error.message


@pytest.mark.parametrize("mode", MODES)
def test_a_batch_with_a_bad_item_gives_that_item_its_own_status(generated, server_address, mode):
    common = generated.common
    pb2 = generated.pb2["oxbind.v1.DissociationService"]
    items = [
        pb2.SaturationFromTensionRequest(po2=common.Quantity(value=v, unit=u))
        for v, u in [(40, "mm[Hg]"), (math.nan, "mm[Hg]"), (60, "mmHg"), (5.6, "kPa")]
    ]
    request = pb2.BatchSaturationFromTensionRequest(requests=items)
    response = call(
        generated, server_address, mode, "oxbind.v1.DissociationService/BatchSaturationFromTension", request
    )
    assert len(response.results) == 4
    kinds = [r.WhichOneof("result") for r in response.results]
    # NaN is not a number; `mmHg` is not the UCUM code (`mm[Hg]`), and a unit
    # is never guessed.
    assert kinds == ["response", "error", "error", "response"], kinds
    # derived from Severinghaus 1979 Eq. 1 at 40 mm[Hg] (tests/vectors).
    assert abs(response.results[0].response.saturation_fraction - 0.749465) <= 1e-6
    check_item_error(
        "nan item", response, {"index": 1, "field": "requests[1].po2.value", "reason": "VALUE_NOT_FINITE"}
    )
    check_item_error(
        "unit item", response, {"index": 2, "field": "requests[2].po2.unit", "reason": "UNIT_NOT_ACCEPTED"}
    )


def test_the_readme_request_answers_with_provenance(generated, server_address):
    common = generated.common
    pb2 = generated.pb2["oxbind.v1.DissociationService"]
    request = pb2.SaturationFromTensionRequest(po2=common.Quantity(value=60, unit="mm[Hg]"))
    response = call(
        generated, server_address, "json-http1", "oxbind.v1.DissociationService/SaturationFromTension", request
    )
    # derived from Severinghaus 1979 Eq. 1: 1 / (23400 / (60^3 + 150 * 60) + 1).
    assert abs(response.saturation_fraction - 0.905797) <= 1e-6
    assert response.provenance.model_id == "severinghaus-1979"
    assert response.provenance.HasField("compute_time")
    assert any(i.name == "po2" for i in response.provenance.inputs_used)


def test_a_deadline_shorter_than_the_work_ends_the_call(generated, server_address):
    common = generated.common
    pb2 = generated.pb2["oxbind.v1.DissociationService"]
    # The heaviest curve within the limits: ten condition sets of 10,000 points.
    request = pb2.SampleCurveRequest(
        condition_sets=[common.BloodConditions(ph=7.0 + 0.05 * i) for i in range(10)],
        point_count=10_000,
        model=common.MODEL_DASH_2016,
    )
    with pytest.raises(ConnectError) as raised:
        call(
            generated,
            server_address,
            "proto-http2",
            "oxbind.v1.DissociationService/SampleCurve",
            request,
            timeout_ms=1,
        )
    assert raised.value.code == Code.DEADLINE_EXCEEDED
