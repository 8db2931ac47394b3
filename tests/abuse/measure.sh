#!/usr/bin/env bash
# Run every attack of the abuse suite at the server's default settings
# against one server binary and keep the figures (RELIABILITY.md's tables).
#   bash tests/abuse/measure.sh target/release/oxbind-server tests/abuse/figures/after
# Each attack starts its own server. The load average before and after each
# attack goes into load-average.txt: on a shared machine, read the latency
# figures with it.
set -euo pipefail
server="$1"
out="$2"
tool="${OXBIND_ABUSE:-target/release/oxbind-abuse}"
mkdir -p "$out"
: > "$out/load-average.txt"
run() {
    local name="$1"
    shift
    echo "== $name before: $(cut -d' ' -f1-3 /proc/loadavg)" >> "$out/load-average.txt"
    "$tool" --server-bin "$server" "$@" > "$out/$name.json"
    echo "   $name after:  $(cut -d' ' -f1-3 /proc/loadavg)" >> "$out/load-average.txt"
}
run protocol protocol
run shutdown-watch shutdown-watch
run headers-only headers-only --connections 4 --observe-s 15
run unended-requests unended-requests --connections 4 --observe-s 15
run reflection-streams reflection-streams --connections 4 --observe-s 45
run overload overload
run batch-flood batch-flood --duration-s 20
run worst-mix worst-mix --duration-s 20
run stalled-readers stalled-readers --observe-s 20
run idle-sockets idle-sockets --sockets 1100 --honest-limit-s 30 --observe-s 30
run idle-sockets-mtls idle-sockets --mutual-tls --sockets 1100 --honest-limit-s 30 --observe-s 30
run health-sockets --open-file-limit 4096 health-sockets --sockets 5000 --honest-limit-s 30 --observe-s 20
run idle-connections idle-connections --connections 64 --observe-s 75
run connect-idle-sockets connect-idle-sockets --sockets 300 --honest-limit-s 30 --observe-s 30
run http1-unfinished-heads http1-unfinished-heads --sockets 1100 --honest-limit-s 30 --observe-s 30
run connect-unsent-bodies connect-unsent-bodies
run connect-batch-flood connect-batch-flood --duration-s 20
run doors-overload doors-overload
