"""Every shared vector, sent by Python's reference gRPC client to a freshly
started oxbind-server. The Rust suite (tests/tests/shared_vectors.rs) checks
the same file."""

import pytest

from conftest import V1_SERVICES, load_vectors
from vectors import check_vector

VECTORS = load_vectors()


@pytest.mark.parametrize("vector", VECTORS, ids=[v["name"] for v in VECTORS])
def test_vector(stubs, channel, vector):
    check_vector(stubs, channel, vector)


def test_vectors_cover_every_rpc_of_the_contract(stubs):
    covered = {v["rpc"] for v in VECTORS}
    expected = {
        f"{service}/{method.name}"
        for service in V1_SERVICES
        for method in stubs.service_descriptor(service).methods
    }
    assert len(expected) >= 11
    assert expected - covered == set()
    names = [v["name"] for v in VECTORS]
    assert len(names) == len(set(names)), "vector names must be unique"
