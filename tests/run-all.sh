#!/usr/bin/env bash
# Runs every check the project has, on a fresh machine with the Rust
# toolchains (stable and nightly, the latter for the fuzz step), Python 3 and
# Node: formatting, clippy, all Rust tests, buf lint of the contract, buf
# breaking against the previous commit, and schema validation of every
# Kubernetes manifest. Python tools go into a virtual environment made here;
# headless Chromium (Debian's package) is installed with apt-get when absent.
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$root"

venv="${OXBIND_TEST_VENV:-$root/target/test-venv}"
# Pinned versions of the Python-packaged tools.
buf_bin_version="1.75.0"
kubernetes_validate_version="1.37.0"
# The Kubernetes version the manifests are validated against (native gRPC
# probes are GA from 1.27).
kubernetes_schema_version="1.30.0"

step() { printf '\n==> %s\n' "$*"; }

step "Python tools in $venv"
if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
fi
"$venv/bin/python" -m pip install --quiet --disable-pip-version-check \
    "buf-bin==$buf_bin_version" \
    "kubernetes-validate==$kubernetes_validate_version"

step "System packages: headless Chromium and fonts (the verification report's print test)"
# client/tests/verify.rs renders the HTML report of `oxbind verify` to PDF and
# PNG with headless Chromium, so that it is known to print.
if ! command -v chromium >/dev/null 2>&1 && ! command -v chromium-browser >/dev/null 2>&1; then
    if [ "$(id -u)" -eq 0 ]; then
        apt_get=(apt-get)
    else
        apt_get=(sudo apt-get)
    fi
    "${apt_get[@]}" update -qq
    DEBIAN_FRONTEND=noninteractive "${apt_get[@]}" install -y -qq --no-install-recommends \
        chromium fonts-dejavu-core fonts-liberation
fi
echo "$(command -v chromium || command -v chromium-browser)"

step "cargo fmt --check"
cargo fmt --all -- --check

step "cargo clippy (warnings are errors)"
cargo clippy --workspace --all-targets --locked -- -D warnings

step "cargo test"
# The abuse suite has its own step below.
cargo test --workspace --locked --exclude oxbind-abuse

step "abuse suite (tests/abuse: hostile and heavy traffic against a real oxbind-server on loopback)"
# Each finding of issue 19 reproduced and checked, about a minute in all;
# RELIABILITY.md has the same attacks at the default settings, with figures.
cargo build --locked -p oxbind-service --bin oxbind-server
cargo test --locked -p oxbind-abuse

step "buf lint and build (proto/)"
(cd proto && "$venv/bin/buf" lint && "$venv/bin/buf" build)

step "buf breaking (proto/ against the previous commit)"
# A fresh clone may be shallow, and the first commit has no parent: skip with
# a message rather than fail when there is no previous commit holding proto/.
if git rev-parse --verify --quiet 'HEAD~1^{commit}' >/dev/null \
    && git cat-file -e 'HEAD~1:proto/buf.yaml' 2>/dev/null; then
    "$venv/bin/buf" breaking proto --against '.git#ref=HEAD~1,subdir=proto'
else
    echo "skipped: no previous commit with proto/ in this clone"
fi

step "Kubernetes manifests against the schemas of $kubernetes_schema_version"
# kustomize itself is not installed; every plain object (the base and the
# overlay's patches, which are full objects) is validated on its own.
manifests=()
while IFS= read -r file; do
    manifests+=("$file")
done < <(find deploy/kubernetes -name '*.yaml' ! -name 'kustomization.yaml' | sort)
"$venv/bin/kubernetes-validate" --strict --quiet \
    --kubernetes-version "$kubernetes_schema_version" "${manifests[@]}"
echo "${#manifests[@]} manifests valid"

step "interop (an independent Python grpcio client)"
bash tests/interop/run.sh

step "Connect (the official Connect client for Python, connectrpc)"
bash tests/connect/run.sh

step "FHIR answers validated independently (fhirclient, R4 JSON Schema, FHIRPath)"
bash tests/fhir/run.sh

step "fuzz smoke (cargo-fuzz on the nightly toolchain: corpus replay and about 60 s of fuzzing)"
bash tests/fuzz-smoke.sh

step "all checks passed"
