#!/usr/bin/env bash
# Runs every check the project has, on a fresh machine with only the Rust
# toolchain and Python 3: formatting, clippy, all Rust tests, and buf lint of
# the contract. Python tools go into a virtual environment made here.
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$root"

venv="${OXBIND_TEST_VENV:-$root/target/test-venv}"
# Pinned versions of the Python-packaged tools.
buf_bin_version="1.75.0"

step() { printf '\n==> %s\n' "$*"; }

step "Python tools in $venv"
if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
fi
"$venv/bin/python" -m pip install --quiet --disable-pip-version-check \
    "buf-bin==$buf_bin_version"

step "cargo fmt --check"
cargo fmt --all -- --check

step "cargo clippy (warnings are errors)"
cargo clippy --workspace --all-targets --locked -- -D warnings

step "cargo test"
cargo test --workspace --locked

step "buf lint and build (proto/)"
(cd proto && "$venv/bin/buf" lint && "$venv/bin/buf" build)

step "all checks passed"
