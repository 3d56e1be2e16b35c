#!/usr/bin/env bash
# Resident memory of the real service while large scenes are registered in a row: a fresh `sayso serve` on
# loopback with a fresh data directory and a 300 s request time limit (so every registration runs to its
# end), then N different 4096x4096 PNGs (default 5) registered one after another over the JSON route, and
# the process's resident set (VmRSS in /proc/PID/status) read once it is idle after each. Without a bound
# on the bytes of cached scenes every registered scene stays resident; with `scene_memory_bytes` the
# resident set stays near the budget plus the scene last used. Extra config lines (e.g.
# "scene_memory_bytes = 1073741824") can follow the binary. The images come from
# tests/api/make_peak_images.py (Pillow). Not run by `cargo test` (it needs Python and a release binary).
#
#   bash tests/api/cache_memory.sh [path/to/sayso] [N] [config line]...
set -euo pipefail
trap 'echo "cache_memory.sh: a step failed at line $LINENO" >&2' ERR
binary="$(realpath "${1:-target/release/sayso}")"
count="${2:-5}"
shift $(( $# > 2 ? 2 : $# ))
here="$(cd "$(dirname "$0")" && pwd)"
work="$(mktemp -d)"
server=""
cleanup() {
    if [ -n "$server" ]; then kill "$server" 2>/dev/null || true; wait "$server" 2>/dev/null || true; fi
    rm -rf "$work"
}
trap cleanup EXIT
python3 "$here/make_peak_images.py" "$work/images" "$count" > /dev/null

# rss_kb, hwm_kb, cpu_ticks, settle.
. "$here/proc_memory.sh"

printf 'request_timeout_ms = 300000\n' > "$work/config.toml"
for line in "$@"; do printf '%s\n' "$line" >> "$work/config.toml"; done

"$binary" serve --config "$work/config.toml" --data-dir "$work/data" --port 0 > "$work/serve.out" 2> "$work/serve.err" &
server=$!
port=""
for _ in $(seq 300); do
    port="$(grep -oE '127\.0\.0\.1:[0-9]+' "$work/serve.out" | head -1 | cut -d: -f2 || true)"
    [ -n "$port" ] && break
    sleep 0.1
done
[ -n "$port" ] || { echo "the service did not start"; cat "$work/serve.err"; exit 1; }
base="http://127.0.0.1:$port"
curl -sf "$base/v1/health" > /dev/null

echo "sayso cached-scene memory, $(date -u '+%Y-%m-%d %H:%M UTC'), load average $(cut -d' ' -f1-3 /proc/loadavg)"
echo "config: $(tr '\n' ';' < "$work/config.toml")"
printf '%-10s VmRSS %7d kB\n' "idle" "$(rss_kb "$server")"
for index in $(seq "$count"); do
    python3 -c 'import base64, json, sys
print(json.dumps({"name": sys.argv[2], "image_base64": base64.b64encode(open(sys.argv[1], "rb").read()).decode()}))' \
        "$work/images/large_$index.png" "large-$index" > "$work/body.json"
    started=$SECONDS
    status="$(curl -s -o "$work/answer" -w '%{http_code}' -X POST "$base/v1/scenes" \
        -H 'Content-Type: application/json' --data-binary "@$work/body.json")"
    seconds=$((SECONDS - started))
    settle "$server"
    printf '%-10s HTTP %s in %3d s | VmRSS %7d kB | VmHWM %7d kB | load %s\n' "scene $index" "$status" \
        "$seconds" "$(rss_kb "$server")" "$(hwm_kb "$server")" "$(cut -d' ' -f1 /proc/loadavg)"
done
# The first scene again: let go under a budget, it is read back from the log (VmHWM is the peak of this
# request alone: it is reset first). Then the same overlay once more, the scene now held.
for read in "read 1" "again 1"; do
    reset_hwm "$server"
    started="$(date +%s.%N)"
    status="$(curl -s -o "$work/answer" -w "%{http_code}" "$base/v1/scenes/1/overlay.png")"
    seconds="$(echo "$(date +%s.%N) - $started" | bc)"
    settle "$server"
    printf '%-10s HTTP %s in %5.1f s | VmRSS %7d kB | VmHWM %7d kB | %d bytes | load %s\n' "$read" "$status" \
        "$seconds" "$(rss_kb "$server")" "$(hwm_kb "$server")" "$(stat -c %s "$work/answer")" \
        "$(cut -d' ' -f1 /proc/loadavg)"
done
echo "load average at the end $(cut -d' ' -f1-3 /proc/loadavg)"
