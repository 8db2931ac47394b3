"""Rich error details, batch item errors, health checking and server
reflection, each through the Python package made for it (grpcio-status,
grpcio-health-checking, grpcio-reflection's messages)."""

import grpc
import pytest
from google.protobuf import descriptor_pb2, descriptor_pool
from grpc_health.v1 import health_pb2, health_pb2_grpc
from grpc_reflection.v1alpha import reflection_pb2
from grpc_status import rpc_status

from conftest import V1_SERVICES
from vectors import ERROR_DOMAIN, bad_request_and_error_info

# grpc.reflection.v1 has the same messages as v1alpha (grpc doc
# server-reflection.md); grpcio-reflection ships only the v1alpha modules, so
# they serialize the v1 method's messages here.
REFLECTION_V1_METHOD = "/grpc.reflection.v1.ServerReflection/ServerReflectionInfo"


def dissociation(stubs):
    return stubs.pb2["oxbind.v1.DissociationService"]


def test_a_refusal_names_every_bad_field_in_a_bad_request(stubs, channel):
    pb2 = dissociation(stubs)
    common = stubs.common
    request = pb2.SaturationFromTensionRequest(
        po2=common.Quantity(value=60, unit="mm[Hg]"),
        conditions=common.BloodConditions(
            ph=8.6, temperature=common.Quantity(value=47, unit="Cel")
        ),
    )
    stub = stubs.stub("oxbind.v1.DissociationService", channel)
    with pytest.raises(grpc.RpcError) as raised:
        stub.SaturationFromTension(request, timeout=10)
    error = raised.value
    assert error.code() == grpc.StatusCode.INVALID_ARGUMENT
    trailer_keys = [key for key, _ in error.trailing_metadata()]
    assert "grpc-status-details-bin" in trailer_keys
    status = rpc_status.from_call(error)
    violations, info = bad_request_and_error_info(status)
    fields = {field for field, _ in violations}
    # design.md input rules: pH outside 6.0-8.5 is refused; proto/API.md
    # section 4 gives the temperature hard limit.
    assert {"conditions.ph", "conditions.temperature.value"} <= fields, violations
    assert ("conditions.ph", "PH_OUT_OF_RANGE") in violations
    assert info is not None and info[1] == ERROR_DOMAIN
    # AIP-193: reason is UPPER_SNAKE_CASE.
    assert info[0].isupper() and " " not in info[0]


def test_a_batch_with_a_bad_item_gives_that_item_its_own_status(stubs, channel):
    pb2 = dissociation(stubs)
    common = stubs.common
    items = [
        pb2.SaturationFromTensionRequest(po2=common.Quantity(value=v, unit=u))
        for v, u in [(40, "mm[Hg]"), (float("nan"), "mm[Hg]"), (60, "mm[Hg]")]
    ]
    stub = stubs.stub("oxbind.v1.DissociationService", channel)
    response = stub.BatchSaturationFromTension(
        pb2.BatchSaturationFromTensionRequest(requests=items), timeout=10
    )
    kinds = [r.WhichOneof("result") for r in response.results]
    assert kinds == ["response", "error", "response"]
    # Severinghaus 1979 Eq. 1 at 40 and 60 mmHg: 0.749465 / 0.905797
    # (derived, methods.md section 1).
    assert abs(response.results[0].response.saturation_fraction - 0.749465) <= 1e-6
    assert abs(response.results[2].response.saturation_fraction - 0.905797) <= 1e-6
    status = response.results[1].error
    assert status.code == grpc.StatusCode.INVALID_ARGUMENT.value[0]
    violations, info = bad_request_and_error_info(status)
    assert ("requests[1].po2.value", "VALUE_NOT_FINITE") in violations, violations
    assert info == ("VALUE_NOT_FINITE", ERROR_DOMAIN)


def test_a_shared_provenance_batch_names_one_entry_per_model(stubs, channel):
    pb2 = dissociation(stubs)
    common = stubs.common
    items = [
        pb2.SaturationFromTensionRequest(po2=common.Quantity(value=v, unit="mm[Hg]"))
        for v in (40, float("nan"), 60)
    ]
    stub = stubs.stub("oxbind.v1.DissociationService", channel)
    response = stub.BatchSaturationFromTension(
        pb2.BatchSaturationFromTensionRequest(
            requests=items,
            provenance_placement=pb2.PROVENANCE_PLACEMENT_SHARED,
        ),
        timeout=10,
    )
    kinds = [r.WhichOneof("result") for r in response.results]
    assert kinds == ["response", "error", "response"]
    assert [p.model_id for p in response.shared_provenance] == ["severinghaus-1979"]
    assert len(response.shared_provenance[0].inputs_used) == 0
    for index in (0, 2):
        item = response.results[index]
        assert item.shared_provenance_index == 0
        assert not item.response.HasField("provenance")
    # Severinghaus 1979 Eq. 1 at 60 mmHg: 0.905797 (derived, methods.md section 1).
    assert abs(response.results[2].response.saturation_fraction - 0.905797) <= 1e-6


@pytest.mark.parametrize("service", ["", *V1_SERVICES])
def test_health_is_serving(channel, service):
    # grpc.health.v1: "" is the whole server; each service by its full name.
    health = health_pb2_grpc.HealthStub(channel)
    response = health.Check(health_pb2.HealthCheckRequest(service=service), timeout=10)
    assert response.status == health_pb2.HealthCheckResponse.SERVING


def test_health_answers_not_found_for_an_unknown_service(channel):
    # grpc.health.v1 (doc/health-checking.md): an unknown name gets NOT_FOUND.
    health = health_pb2_grpc.HealthStub(channel)
    with pytest.raises(grpc.RpcError) as raised:
        health.Check(health_pb2.HealthCheckRequest(service="oxbind.v1.NoSuchService"), timeout=10)
    assert raised.value.code() == grpc.StatusCode.NOT_FOUND


def reflect(channel, requests):
    info = channel.stream_stream(
        REFLECTION_V1_METHOD,
        request_serializer=reflection_pb2.ServerReflectionRequest.SerializeToString,
        response_deserializer=reflection_pb2.ServerReflectionResponse.FromString,
    )
    return list(info(iter(requests), timeout=10))


def test_reflection_lists_the_v1_services_and_health(channel):
    (response,) = reflect(channel, [reflection_pb2.ServerReflectionRequest(list_services="")])
    assert response.WhichOneof("message_response") == "list_services_response"
    names = {s.name for s in response.list_services_response.service}
    assert set(V1_SERVICES) <= names, names
    assert "grpc.health.v1.Health" in names, names


def test_reflection_gives_descriptors_that_resolve_every_method(channel, stubs):
    """Fetch the file declaring DissociationService, then (as grpcurl and other
    reflection clients do) any dependency not sent along, by file name."""
    files = {}

    def receive(response):
        assert response.WhichOneof("message_response") == "file_descriptor_response", response
        for raw in response.file_descriptor_response.file_descriptor_proto:
            proto = descriptor_pb2.FileDescriptorProto.FromString(raw)
            files[proto.name] = proto

    (first,) = reflect(
        channel,
        [reflection_pb2.ServerReflectionRequest(file_containing_symbol="oxbind.v1.DissociationService")],
    )
    receive(first)
    for _ in range(20):
        missing = {d for f in files.values() for d in f.dependency} - set(files)
        if not missing:
            break
        for response in reflect(
            channel,
            [reflection_pb2.ServerReflectionRequest(file_by_filename=name) for name in sorted(missing)],
        ):
            receive(response)
    pool = descriptor_pool.DescriptorPool()
    pending = dict(files)
    # Add files once their dependencies are in.
    while pending:
        ready = [f for f in pending.values() if all(d not in pending for d in f.dependency)]
        assert ready, f"unresolvable dependencies among {sorted(pending)}"
        for f in ready:
            pool.Add(f)
            del pending[f.name]
    service = pool.FindServiceByName("oxbind.v1.DissociationService")
    local = stubs.service_descriptor("oxbind.v1.DissociationService")
    assert sorted(m.name for m in service.methods) == sorted(m.name for m in local.methods)
