#!/usr/bin/env bash
# Fuzz smoke run: builds every cargo-fuzz target of service/fuzz, replays the
# committed seed corpus and the reproducers of bugs found so far (each input
# once), then fuzzes each target for a bounded time (about 60 s in all), and
# reports. Fails if any input panics (a crash, a NaN or infinity in a
# response, a refusal that is not INVALID_ARGUMENT naming a field) or times
# out, and if the nightly toolchain is missing.
#
# Needs: rustup with the nightly toolchain. cargo-fuzz is installed here into
# target/cargo-fuzz (pinned version). The longer release run is described in
# service/fuzz/README.md.
#
# Environment:
#   OXBIND_FUZZ_SECONDS   total fuzzing time over all targets (default 60)
#   CARGO_BUILD_JOBS      build parallelism (default 1: the machine is shared)
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
fuzz_dir="$root/service/fuzz"
tools="$root/target/cargo-fuzz"
target_dir="$root/target/fuzz"
work="$target_dir/smoke"
cargo_fuzz_version="0.13.2"
targets=(saturation tension curve conditions transport consistency)
total_seconds="${OXBIND_FUZZ_SECONDS:-60}"
per_target=$(( total_seconds / ${#targets[@]} ))
if [ "$per_target" -lt 1 ]; then per_target=1; fi
export CARGO_BUILD_JOBS="${CARGO_BUILD_JOBS:-1}"

# One input may ask for 10 condition sets x 10,000 curve points (the
# service's own limits), so allow seconds per input; 4096-byte inputs keep
# EstimateP50 pair lists and batches to a size that runs fast.
fuzz_flags=(-timeout=10 -rss_limit_mb=2048 -max_len=4096)

step() { printf '\n==> %s\n' "$*"; }
fail() { printf 'fuzz-smoke: %s\n' "$*" >&2; exit 1; }

step "nightly toolchain"
if ! command -v rustup >/dev/null 2>&1; then
    fail "rustup is not installed; cargo-fuzz needs rustup's nightly toolchain"
fi
if ! rustup toolchain list | grep -q '^nightly'; then
    fail "the nightly toolchain is not installed (cargo-fuzz needs it): rustup toolchain install nightly"
fi
cargo +nightly --version

step "cargo-fuzz $cargo_fuzz_version in $tools"
if ! "$tools/bin/cargo-fuzz" --version 2>/dev/null | grep -q " $cargo_fuzz_version\$"; then
    cargo +nightly install cargo-fuzz --version "$cargo_fuzz_version" --locked --root "$tools"
fi
export PATH="$tools/bin:$PATH"
cargo fuzz --version

step "build every target (no sanitizer: the Rust code forbids unsafe; debug assertions on)"
(cd "$fuzz_dir" && cargo +nightly fuzz build --sanitizer none --target-dir "$target_dir")
bin_dir="$target_dir/x86_64-unknown-linux-gnu/release"

declare -A replay_result fuzz_result fuzz_runs
failed=0

step "replay the seed corpus and the regression inputs (-runs=0)"
for t in "${targets[@]}"; do
    dirs=("$fuzz_dir/corpus/$t")
    if [ -d "$fuzz_dir/regressions/$t" ]; then dirs+=("$fuzz_dir/regressions/$t"); fi
    log="$work/$t-replay.log"
    mkdir -p "$work/artifacts/$t"
    if "$bin_dir/$t" "${fuzz_flags[@]}" -runs=0 -artifact_prefix="$work/artifacts/$t/replay-" \
        "${dirs[@]}" >"$log" 2>&1; then
        replay_result[$t]="ok ($(grep -c . <(find "${dirs[@]}" -type f)) inputs)"
    else
        replay_result[$t]="FAILED"
        failed=1
        grep -m1 -A1 'panicked at' "$log" >&2 || tail -n 20 "$log" >&2
    fi
done

step "fuzz each target for $per_target s"
for t in "${targets[@]}"; do
    scratch="$work/corpus/$t"
    artifacts="$work/artifacts/$t"
    log="$work/$t-fuzz.log"
    rm -rf "$scratch"
    mkdir -p "$scratch" "$artifacts"
    # New inputs go to the scratch directory (first), never into the
    # committed seed corpus.
    if "$bin_dir/$t" "${fuzz_flags[@]}" -max_total_time="$per_target" \
        -artifact_prefix="$artifacts/" "$scratch" "$fuzz_dir/corpus/$t" >"$log" 2>&1; then
        fuzz_result[$t]="ok"
    else
        fuzz_result[$t]="FAILED (input in $artifacts)"
        failed=1
        grep -m1 -A1 'panicked at' "$log" >&2 || tail -n 20 "$log" >&2
    fi
    fuzz_runs[$t]="$(sed -n 's/^Done \([0-9]*\) runs in \([0-9]*\) second.*/\1 runs in \2 s/p' "$log" | tail -n 1)"
done

step "report"
printf '%-12s %-24s %-40s %s\n' target replay fuzz executions
for t in "${targets[@]}"; do
    printf '%-12s %-24s %-40s %s\n' "$t" "${replay_result[$t]}" "${fuzz_result[$t]}" "${fuzz_runs[$t]:--}"
done
if [ "$failed" -ne 0 ]; then
    fail "a fuzz target failed: logs in $work; reproduce with $bin_dir/<target> <input file>"
fi
echo "fuzz smoke passed"
