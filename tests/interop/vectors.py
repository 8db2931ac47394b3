"""Checking the shared vectors (tests/vectors/*.json) from Python.

Schema (the vector file's "description" says the same): "request" is the
protobuf JSON mapping of the request; "expect" entries are
{"path", "value", "tolerance"} (number, absolute tolerance), {"path",
"equals"} (exact) or {"path", "contains"} (a list element with these keys);
"itemErrors" are batch items with their own google.rpc.Status; "refused" is a
whole-call INVALID_ARGUMENT refusal. Paths walk the response's JSON form:
dotted lowerCamelCase names and [i] for list elements.
"""

import re

import grpc
from google.protobuf import json_format
from google.rpc import error_details_pb2
from grpc_status import rpc_status

# Numbers in "equals" and "contains" should agree exactly (enum names, limits).
EXACT_NUMBER_TOLERANCE = 1e-12
# Every refusal's ErrorInfo carries this domain (design.md, AIP-193).
ERROR_DOMAIN = "oxbind.v1"
_SEGMENT = re.compile(r"^([A-Za-z0-9_]+)((?:\[\d+\])*)$")


def lookup(root, path):
    """The value at a dotted path such as curves[0].points[3].po2, or KeyError."""
    node = root
    for segment in path.split("."):
        match = _SEGMENT.match(segment)
        if match is None:
            raise ValueError(f"bad path segment {segment!r} in {path!r}")
        node = node[match.group(1)]
        for index in re.findall(r"\[(\d+)\]", match.group(2)):
            node = node[int(index)]
    return node


def matches(actual, want):
    """Whether actual has every key of want with an equal value."""
    if isinstance(want, dict):
        return isinstance(actual, dict) and all(
            key in actual and matches(actual[key], value) for key, value in want.items()
        )
    if isinstance(want, bool) or isinstance(actual, bool):
        return actual is want
    if isinstance(want, (int, float)) and isinstance(actual, (int, float)):
        return abs(actual - want) <= EXACT_NUMBER_TOLERANCE
    return actual == want


def rpc_parts(rpc):
    service, method = rpc.split("/")
    return service, method


def build_request(stubs, vector):
    service, method = rpc_parts(vector["rpc"])
    descriptor = stubs.service_descriptor(service).methods_by_name[method]
    from google.protobuf import message_factory

    request_class = message_factory.GetMessageClass(descriptor.input_type)
    return json_format.ParseDict(vector["request"], request_class())


def call(stubs, channel, vector):
    """Send the vector's request through the generated stub."""
    service, method = rpc_parts(vector["rpc"])
    request = build_request(stubs, vector)
    return getattr(stubs.stub(service, channel), method)(request, timeout=10)


def to_json(message):
    return json_format.MessageToDict(message, always_print_fields_with_no_presence=True)


def bad_request_and_error_info(status):
    """The BadRequest violations and (reason, domain) of a google.rpc.Status."""
    violations, info = [], None
    for detail in status.details:
        if detail.Is(error_details_pb2.BadRequest.DESCRIPTOR):
            bad = error_details_pb2.BadRequest()
            detail.Unpack(bad)
            violations.extend((v.field, v.reason) for v in bad.field_violations)
        elif detail.Is(error_details_pb2.ErrorInfo.DESCRIPTOR):
            error = error_details_pb2.ErrorInfo()
            detail.Unpack(error)
            info = (error.reason, error.domain)
    return violations, info


def check_expectation(name, response, expectation):
    path = expectation["path"]
    try:
        actual = lookup(response, path)
    except (KeyError, IndexError):
        raise AssertionError(f"{name}: {path} is absent from the response {response}") from None
    if "value" in expectation:
        expected, tolerance = expectation["value"], expectation["tolerance"]
        assert isinstance(actual, (int, float)) and not isinstance(actual, bool), (
            f"{name}: {path} is not a number: {actual!r}"
        )
        assert abs(actual - expected) <= tolerance, (
            f"{name}: {path} = {actual!r}, expected {expected} +/- {tolerance}"
        )
    elif "equals" in expectation:
        assert matches(actual, expectation["equals"]), (
            f"{name}: {path} = {actual!r}, expected {expectation['equals']!r}"
        )
    elif "contains" in expectation:
        assert isinstance(actual, list), f"{name}: {path} is not a list"
        assert any(matches(element, expectation["contains"]) for element in actual), (
            f"{name}: no element of {path} matches {expectation['contains']}: {actual}"
        )
    else:
        raise AssertionError(f"{name}: expectation on {path} has no value, equals or contains")


def check_item_error(name, response_json, response, wanted):
    index, field, reason = wanted["index"], wanted["field"], wanted["reason"]
    item_json = response_json["results"][index]
    assert "response" not in item_json, f"{name}: item {index} computed"
    assert "error" in item_json, f"{name}: item {index} has no error: {item_json}"
    # Typed route: the item's google.rpc.Status and its packed details.
    status = response.results[index].error
    assert status.code == grpc.StatusCode.INVALID_ARGUMENT.value[0], f"{name}: item {index}"
    violations, info = bad_request_and_error_info(status)
    assert (field, reason) in violations, f"{name}: item {index}: {violations}"
    assert info == (reason, ERROR_DOMAIN), f"{name}: item {index}: {info}"
    # JSON route: the same details rendered through the Any type registry.
    details = item_json["error"]["details"]
    assert any(
        d.get("@type", "").endswith("google.rpc.BadRequest")
        and any(v.get("field") == field and v.get("reason") == reason for v in d["fieldViolations"])
        for d in details
    ), f"{name}: item {index} JSON details {details}"


def check_refusal(name, error, refused):
    assert error.code() == grpc.StatusCode.INVALID_ARGUMENT, f"{name}: {error.code()} {error.details()}"
    status = rpc_status.from_call(error)
    assert status is not None, f"{name}: no grpc-status-details-bin trailer"
    assert status.code == grpc.StatusCode.INVALID_ARGUMENT.value[0]
    violations, info = bad_request_and_error_info(status)
    wanted = (refused["field"], refused["reason"])
    assert wanted in violations, f"{name}: expected {wanted}, got {violations}"
    assert info == (refused["reason"], ERROR_DOMAIN), f"{name}: ErrorInfo {info}"


def check_vector(stubs, channel, vector):
    name = vector["name"]
    assert vector.get("source", "").strip(), f"{name}: no source"
    if "refused" in vector:
        try:
            call(stubs, channel, vector)
        except grpc.RpcError as error:
            check_refusal(name, error, vector["refused"])
        else:
            raise AssertionError(f"{name}: expected a refusal, the call computed")
        return
    response = call(stubs, channel, vector)
    response_json = to_json(response)
    expectations = vector.get("expect", [])
    item_errors = vector.get("itemErrors", [])
    assert expectations or item_errors, f"{name}: expects nothing"
    for expectation in expectations:
        check_expectation(name, response_json, expectation)
    for wanted in item_errors:
        check_item_error(name, response_json, response, wanted)
