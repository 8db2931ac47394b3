#!/usr/bin/env bash
# The server as a deployment that follows the README runs it: default
# settings (log filter info, plain log lines, the default call limits), its log
# written to a file. Three rounds; in each, one fresh server and, against it in
# turn:
#   h2load  grpc.health.v1.Health/Check                          (64 in flight, 4 connections)
#   h2load  oxbind.v1.DissociationService/SaturationFromTension  (pH, PCO2, temperature; same)
#   oxbind-load --rpc saturation --baseline over gRPC            (Health/Check, then the RPC)
#   oxbind-load --rpc saturation over Connect JSON and binary    (if the generator has --protocol)
# Each window: 2 s warm-up, 5 s measured. The server's CPU time over each
# h2load window comes from /proc/PID/stat. Non-OK statuses are counted from
# the server's access log (h2load sees only HTTP statuses).
#
#   bash tests/bench/default-settings.sh SERVER-BINARY OUT-DIR [SERVER FLAGS...]
#
# Needs: h2load (Debian's nghttp2-client), target/release/oxbind-load, and the
# request bodies (cargo run --release -p oxbind-client --example h2load_bodies -- OUT-DIR).
set -euo pipefail
server="$1"
out="$2"
shift 2
load="${OXBIND_LOAD:-target/release/oxbind-load}"
port="${BENCH_PORT:-50571}"
url="http://127.0.0.1:$port"
rounds="${BENCH_ROUNDS:-3}"
mkdir -p "$out"
[ -f "$out/health-check.grpc" ] || {
    echo "no request bodies in $out: cargo run --release -p oxbind-client --example h2load_bodies -- $out" >&2
    exit 2
}

# Server CPU seconds (user + system) so far.
cpu_s() { awk '{ printf "%.2f", ($14 + $15) / 100 }' "/proc/$1/stat"; }

# h2load one window: NAME PATH BODY-FILE
h2() {
    local name="$1" path="$2" body="$3" before after
    before=$(cpu_s "$pid")
    h2load -c 4 -m 16 -t 1 --warm-up-time=2 -D 5 -d "$body" \
        -H 'content-type: application/grpc' -H 'te: trailers' \
        "$url/$path" > "$out/round-$round-h2load-$name.txt"
    after=$(cpu_s "$pid")
    local rate
    rate=$(awk '/^finished in/ { gsub(",", "", $4); print $4 }' "$out/round-$round-h2load-$name.txt")
    echo "round $round h2load $name: $rate calls/s, server CPU $(echo "$after - $before" | bc) s over warm-up and window" \
        | tee -a "$out/summary.txt"
}

protocols=(grpc)
has_protocol=false
if "$load" --help 2>/dev/null | grep -q -- '--protocol'; then
    has_protocol=true
    protocols+=("connect --encoding json" "connect --encoding proto")
fi

: > "$out/summary.txt"
echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)" | tee -a "$out/summary.txt"
for round in $(seq 1 "$rounds"); do
    "$server" --listen "127.0.0.1:$port" "$@" 2> "$out/round-$round-server.log" &
    pid=$!
    for _ in $(seq 1 100); do
        grep -q "serving" "$out/round-$round-server.log" 2>/dev/null && break
        sleep 0.05
    done
    h2 health grpc.health.v1.Health/Check "$out/health-check.grpc"
    h2 saturation oxbind.v1.DissociationService/SaturationFromTension "$out/saturation-conditions.grpc"
    for protocol in "${protocols[@]}"; do
        tag=$(echo "$protocol" | tr ' ' '-' | sed 's/--encoding-//')
        baseline=()
        [ "$protocol" = grpc ] && baseline=(--baseline)
        protocol_args=()
        # shellcheck disable=SC2206
        $has_protocol && protocol_args=(--protocol $protocol)
        "$load" --server "$url" --json --warm-up 2 --duration 5 --in-flight 64 --connections 4 \
            --rpc saturation --seed "$round" --server-pid "$pid" "${baseline[@]}" \
            "${protocol_args[@]}" > "$out/round-$round-load-$tag.json"
        echo "round $round oxbind-load $tag: see round-$round-load-$tag.json" >> "$out/summary.txt"
    done
    kill -TERM "$pid"
    wait "$pid" || true
    # Every access line's status: anything but OK is a refused or failed call.
    grep -o 'status="[A-Z_]*"' "$out/round-$round-server.log" | sort | uniq -c \
        > "$out/round-$round-statuses.txt" || true
    echo "round $round statuses in the access log: $(tr -s ' \n' ' ' < "$out/round-$round-statuses.txt")" \
        | tee -a "$out/summary.txt"
done
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)" | tee -a "$out/summary.txt"
