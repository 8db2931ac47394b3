"""Fixtures for the Connect suite: message and client stubs generated from
proto/ at test time (protoc from grpcio-tools; the messages by protoc's
Python generator, the clients by connectrpc's own generator,
protoc-gen-connectrpc with protobuf=google), and a freshly started
oxbind-server on an ephemeral port.

The suite is an independent client: it uses only the official Connect
client for Python (connectrpc and its HTTP client pyqwest) and the
contract's .proto files, never the Rust client crate.
"""

import importlib
import importlib.resources
import os
import re
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pyshared"))

from oxbind_testing import (  # noqa: E402  (after the path is set)
    PROTO_DIR,
    V1_SERVICE_FILES,
    V1_SERVICES,
    server_process,
)

# The Connect code generator installed by run.sh.
PROTOC_GEN_CONNECTRPC = Path(
    os.environ.get(
        "OXBIND_PROTOC_GEN_CONNECTRPC", Path(sys.executable).parent / "protoc-gen-connectrpc"
    )
)

# Each v1 service's file stem under proto/oxbind/v1/.
SERVICE_FILES = dict(zip(V1_SERVICES, V1_SERVICE_FILES))


def method_attribute(method_name):
    """The generated client's method for an RPC: SaturationFromTension becomes
    saturation_from_tension."""
    return re.sub(r"(?<!^)(?=[A-Z])", "_", method_name).lower()


class Generated:
    """The generated modules of the v1 contract, by service name."""

    def __init__(self):
        self.pb2 = {}
        self.connect = {}
        for service, stem in SERVICE_FILES.items():
            self.pb2[service] = importlib.import_module(f"oxbind.v1.{stem}_pb2")
            self.connect[service] = importlib.import_module(f"oxbind.v1.{stem}_connect")
        self.common = importlib.import_module("oxbind.v1.common_pb2")

    def service_descriptor(self, full_name):
        return self.pb2[full_name].DESCRIPTOR.services_by_name[full_name.rsplit(".", 1)[1]]

    def client(self, full_name, address, codec, http_version):
        """A synchronous Connect client of the service at address, speaking
        codec over http_version."""
        from pyqwest import SyncClient, SyncHTTPTransport

        short = full_name.rsplit(".", 1)[1]
        client_class = getattr(self.connect[full_name], f"{short}ClientSync")
        transport = SyncHTTPTransport(http_version=http_version)
        return client_class(
            f"http://{address}", codec=codec, http_client=SyncClient(transport)
        )


@pytest.fixture(scope="session")
def generated(tmp_path_factory):
    """Generate the messages and Connect clients for proto/oxbind/v1/*.proto.

    google/protobuf/*.proto come from grpc_tools' bundled copies; the
    generated code imports google.rpc.status_pb2 from googleapis-common-protos
    (the same google/rpc/status.proto the contract vendors), so google/rpc is
    not generated here.
    """
    from grpc_tools import protoc

    assert PROTOC_GEN_CONNECTRPC.is_file(), f"no code generator at {PROTOC_GEN_CONNECTRPC}"
    out = tmp_path_factory.mktemp("oxbind_connect_stubs")
    well_known = importlib.resources.files("grpc_tools") / "_proto"
    sources = sorted(
        str(p.relative_to(PROTO_DIR)) for p in (PROTO_DIR / "oxbind" / "v1").glob("*.proto")
    )
    assert sources, f"no .proto files under {PROTO_DIR}"
    args = [
        "grpc_tools.protoc",
        f"-I{PROTO_DIR}",
        f"-I{well_known}",
        f"--python_out={out}",
        f"--plugin=protoc-gen-connectrpc={PROTOC_GEN_CONNECTRPC}",
        f"--connectrpc_out={out}",
        "--connectrpc_opt=protobuf=google",
        *sources,
    ]
    assert protoc.main(args) == 0, f"protoc failed: {' '.join(args)}"
    sys.path.insert(0, str(out))
    # Register the error-detail types so Any in batch item errors renders as JSON.
    importlib.import_module("google.rpc.error_details_pb2")
    return Generated()


@pytest.fixture(scope="session")
def server_address():
    """Start oxbind-server on 127.0.0.1:0 with its built-in defaults (the
    Connect protocol needs no flag) and yield host:port from its log."""
    with server_process() as address:
        yield address
