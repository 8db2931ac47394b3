"""What the Python client suites share (tests/interop, tests/connect): the
repository's paths, a freshly started oxbind-server on an ephemeral port,
the shared vectors, and the checks of a vector's expectations against a
response in the protobuf JSON mapping.

Each suite's conftest.py puts this directory on sys.path.
"""

import json
import os
import queue
import re
import signal
import subprocess
import threading
from contextlib import contextmanager
from pathlib import Path

REPO_ROOT = Path(os.environ.get("OXBIND_REPO_ROOT", Path(__file__).resolve().parents[2]))
PROTO_DIR = REPO_ROOT / "proto"
VECTORS_DIR = REPO_ROOT / "tests" / "vectors"
SERVER_BIN = Path(
    os.environ.get("OXBIND_SERVER_BIN", REPO_ROOT / "target" / "debug" / "oxbind-server")
)

# Seconds the server may take to log that it is serving, and to exit on SIGTERM.
STARTUP_TIMEOUT_S = 30.0
SHUTDOWN_TIMEOUT_S = 15.0

# The v1 services, fully qualified (design.md), and the stem of the .proto
# file that declares each.
V1_SERVICES = (
    "oxbind.v1.DissociationService",
    "oxbind.v1.OxygenTransportService",
    "oxbind.v1.ModelCatalogService",
    "oxbind.v1.ConsistencyService",
)
V1_SERVICE_FILES = ("dissociation", "transport", "catalog", "consistency")

# Every refusal's ErrorInfo carries this domain (design.md, AIP-193).
ERROR_DOMAIN = "oxbind.v1"

# Numbers in "equals" and "contains" should agree exactly (enum names, limits).
EXACT_NUMBER_TOLERANCE = 1e-12

_SEGMENT = re.compile(r"^([A-Za-z0-9_]+)((?:\[\d+\])*)$")


def _drain(stream, lines):
    for line in stream:
        lines.put(line)
    lines.put(None)


@contextmanager
def server_process(*extra_args):
    """Run oxbind-server on 127.0.0.1:0 (plus extra_args) and yield the
    host:port it logs; stop it with SIGTERM afterwards."""
    if not SERVER_BIN.is_file():
        raise AssertionError(f"no server binary at {SERVER_BIN} (run this suite's run.sh)")
    process = subprocess.Popen(
        [str(SERVER_BIN), "--listen", "127.0.0.1:0", "--log-format", "json", *extra_args],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    lines = queue.Queue()
    threading.Thread(target=_drain, args=(process.stderr, lines), daemon=True).start()
    address = None
    seen = []
    try:
        while address is None:
            try:
                line = lines.get(timeout=STARTUP_TIMEOUT_S)
            except queue.Empty:
                raise AssertionError(
                    f"server did not log 'serving' within {STARTUP_TIMEOUT_S} s: {seen}"
                ) from None
            if line is None:
                raise AssertionError(f"server exited with {process.wait()} before serving: {seen}")
            seen.append(line.rstrip())
            try:
                event = json.loads(line)
            except ValueError:
                continue
            if event.get("message") == "serving":
                address = event["address"]
        yield address
    finally:
        if process.poll() is None:
            process.send_signal(signal.SIGTERM)
            try:
                process.wait(timeout=SHUTDOWN_TIMEOUT_S)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait()


def load_vectors():
    """All vectors of tests/vectors/*.json, in file order."""
    vectors = []
    for path in sorted(VECTORS_DIR.glob("*.json")):
        with path.open(encoding="utf-8") as handle:
            vectors.extend(json.load(handle)["vectors"])
    return vectors


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


def check_expectation(name, response, expectation):
    """Check one of a vector's expectations against the response's JSON form."""
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


def bad_request_and_error_info(status):
    """The BadRequest violations, as (field, reason), and the ErrorInfo, as
    (reason, domain), of a google.rpc.Status (googleapis-common-protos)."""
    from google.rpc import error_details_pb2

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
