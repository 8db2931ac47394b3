#!/usr/bin/env bash
# Connect client suite: the official Connect client for Python (connectrpc,
# from PyPI) against a freshly started oxbind-server, with stubs generated
# from proto/ by its own code generator (protoc-gen-connectrpc). Makes its
# own virtual environment, installs the pinned client stack, builds the
# server binary if it is missing, and runs pytest. Exits non-zero on any
# failure, including "no tests collected".
#
# Environment:
#   OXBIND_CONNECT_VENV  virtual environment (default: target/connect-venv)
#   OXBIND_SERVER_BIN    server binary to test, used as given; when unset,
#                        target/debug/oxbind-server is (re)built with cargo
#                        first, a no-op when it is up to date
#   PYTHON               interpreter that creates the venv (default: python3)
# Extra arguments go to pytest (for example -k vectors, -x, -v).
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
cd "$root"

venv="${OXBIND_CONNECT_VENV:-$root/target/connect-venv}"
python="${PYTHON:-python3}"
requirements="$root/tests/connect/requirements.txt"
server_bin_given="${OXBIND_SERVER_BIN:+yes}"
export OXBIND_SERVER_BIN="${OXBIND_SERVER_BIN:-$root/target/debug/oxbind-server}"
export OXBIND_REPO_ROOT="$root"
export OXBIND_PROTOC_GEN_CONNECTRPC="$venv/bin/protoc-gen-connectrpc"
# Keep bytecode caches out of the source tree.
export PYTHONDONTWRITEBYTECODE=1

step() { printf '\n==> %s\n' "$*"; }

step "Connect client stack in $venv"
if [ ! -x "$venv/bin/python" ]; then
    "$python" -m venv "$venv"
fi
stamp="$venv/.oxbind-requirements"
if ! cmp -s "$requirements" "$stamp" 2>/dev/null; then
    "$venv/bin/python" -m pip install --quiet --disable-pip-version-check \
        --requirement "$requirements"
    cp "$requirements" "$stamp"
fi

if [ -z "$server_bin_given" ]; then
    step "cargo build -p oxbind-service --bin oxbind-server"
    cargo build --locked -p oxbind-service --bin oxbind-server
fi
if [ ! -x "$OXBIND_SERVER_BIN" ]; then
    echo "error: no server binary at $OXBIND_SERVER_BIN" >&2
    exit 1
fi

step "pytest tests/connect"
set +e
"$venv/bin/python" -m pytest -c "$root/tests/connect/pytest.ini" \
    --rootdir "$root/tests/connect" "$root/tests/connect" "$@"
status=$?
set -e
if [ "$status" -eq 5 ]; then
    echo "error: pytest collected no tests" >&2
    exit 1
fi
exit "$status"
