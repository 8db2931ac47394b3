"""Checking the shared vectors (tests/vectors/*.json) from Python.

Schema (the vector file's "description" says the same): "request" is the
protobuf JSON mapping of the request; "expect" entries are
{"path", "value", "tolerance"} (number, absolute tolerance), {"path",
"equals"} (exact) or {"path", "contains"} (a list element with these keys);
"itemErrors" are batch items with their own google.rpc.Status; "refused" is a
whole-call INVALID_ARGUMENT refusal. Paths walk the response's JSON form:
dotted lowerCamelCase names and [i] for list elements.
"""

import grpc
from google.protobuf import json_format
from grpc_status import rpc_status

from oxbind_testing import ERROR_DOMAIN, bad_request_and_error_info, check_expectation


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
