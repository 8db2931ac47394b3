"""Fixtures for the interop suite: stubs generated from proto/ at test time,
and a freshly started oxbind-server on an ephemeral port.

The suite is an independent client: it uses only Python's reference gRPC
implementation (grpcio) and the contract's .proto files, never the Rust
client crate.
"""

import importlib
import importlib.resources
import sys
from pathlib import Path

import grpc
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pyshared"))

from oxbind_testing import (  # noqa: E402  (after the path is set)
    PROTO_DIR,
    STARTUP_TIMEOUT_S,
    V1_SERVICE_FILES,
    V1_SERVICES,
    load_vectors,
    server_process,
)


class Stubs:
    """The generated modules of the v1 contract, by service name."""

    def __init__(self, modules):
        self.pb2 = {name: modules[name][0] for name in modules}
        self.grpc = {name: modules[name][1] for name in modules}
        self.common = importlib.import_module("oxbind.v1.common_pb2")

    def service_descriptor(self, full_name):
        pb2 = self.pb2[full_name]
        return pb2.DESCRIPTOR.services_by_name[full_name.rsplit(".", 1)[1]]

    def stub(self, full_name, channel):
        short = full_name.rsplit(".", 1)[1]
        return getattr(self.grpc[full_name], f"{short}Stub")(channel)


@pytest.fixture(scope="session")
def stubs(tmp_path_factory):
    """Generate Python stubs for proto/oxbind/v1/*.proto into a temp dir.

    google/protobuf/*.proto come from grpc_tools' bundled copies; the
    generated code imports google.rpc.status_pb2 from googleapis-common-protos
    (the same google/rpc/status.proto the contract vendors), so google/rpc is
    not generated here: two modules registering one file name would clash.
    """
    from grpc_tools import protoc

    out = tmp_path_factory.mktemp("oxbind_stubs")
    well_known = importlib.resources.files("grpc_tools") / "_proto"
    sources = sorted(str(p.relative_to(PROTO_DIR)) for p in (PROTO_DIR / "oxbind" / "v1").glob("*.proto"))
    assert sources, f"no .proto files under {PROTO_DIR}"
    args = [
        "grpc_tools.protoc",
        f"-I{PROTO_DIR}",
        f"-I{well_known}",
        f"--python_out={out}",
        f"--grpc_python_out={out}",
        *sources,
    ]
    assert protoc.main(args) == 0, f"protoc failed: {' '.join(args)}"
    sys.path.insert(0, str(out))
    modules = {}
    for service, stem in zip(V1_SERVICES, V1_SERVICE_FILES):
        modules[service] = (
            importlib.import_module(f"oxbind.v1.{stem}_pb2"),
            importlib.import_module(f"oxbind.v1.{stem}_pb2_grpc"),
        )
    # Register the error-detail types so Any in batch item errors renders as JSON.
    importlib.import_module("google.rpc.error_details_pb2")
    return Stubs(modules)


@pytest.fixture(scope="session")
def server_address():
    """Start oxbind-server on 127.0.0.1:0 and yield host:port from its log."""
    with server_process() as address:
        yield address


@pytest.fixture(scope="session")
def channel(server_address):
    with grpc.insecure_channel(server_address) as ch:
        grpc.channel_ready_future(ch).result(timeout=STARTUP_TIMEOUT_S)
        yield ch
