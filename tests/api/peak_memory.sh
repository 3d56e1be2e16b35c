#!/usr/bin/env bash
# The whole-request memory peak of the real service: for each case a fresh `sayso serve` on loopback with a
# fresh data directory and the default configuration, one scene registered, and the process's peak resident
# set (VmHWM in /proc/PID/status) read when it is up and idle, at the answer, and once it is idle again.
# Cases: a 640x480 and a 4096x4096 PNG (the default pixel limit), each through the JSON route (base64) and
# the multipart route, the 4096x4096 one also with a 300 s request time limit (the default 10 s may abandon
# it), and a 4097x4096 PNG (over the limit) through both, which must be refused from its header. The
# images come from tests/api/make_peak_images.py (Pillow). Not run by `cargo test` (it needs Python and a
# release binary); see DEVELOPERS.md.
#
#   bash tests/api/peak_memory.sh [path/to/sayso]
set -euo pipefail
trap 'echo "peak_memory.sh: a step failed at line $LINENO" >&2' ERR
binary="$(realpath "${1:-target/release/sayso}")"
here="$(cd "$(dirname "$0")" && pwd)"
work="$(mktemp -d)"
server=""
cleanup() {
    if [ -n "$server" ]; then kill "$server" 2>/dev/null || true; wait "$server" 2>/dev/null || true; fi
    rm -rf "$work"
}
trap cleanup EXIT
python3 "$here/make_peak_images.py" "$work/images" > /dev/null

# rss_kb, hwm_kb, cpu_ticks, settle.
. "$here/proc_memory.sh"

# A config with a longer request time limit, so a 4096x4096 registration runs to its end.
printf 'request_timeout_ms = 300000\n' > "$work/long.toml"

# One case: a fresh service, its idle peak, one registration, its peak at the answer and once the
# process is idle again, and how many scenes the service then lists.
measure() {
    local label="$1" route="$2" image="$3" config="${4:-}"
    local data="$work/data-$label"
    local options=()
    [ -n "$config" ] && options=(--config "$config")
    "$binary" serve "${options[@]}" --data-dir "$data" --port 0 > "$work/serve.out" 2> "$work/serve.err" &
    server=$!
    local port=""
    for _ in $(seq 300); do
        port="$(grep -oE '127\.0\.0\.1:[0-9]+' "$work/serve.out" | head -1 | cut -d: -f2 || true)"
        [ -n "$port" ] && break
        sleep 0.1
    done
    [ -n "$port" ] || { echo "$label: the service did not start"; cat "$work/serve.err"; exit 1; }
    local base="http://127.0.0.1:$port"
    # One small request first, so the idle figure includes what any first request sets up.
    curl -sf "$base/v1/health" > /dev/null
    local idle
    idle="$(hwm_kb "$server")"
    local started=$SECONDS
    local status
    if [ "$route" = json ]; then
        python3 -c 'import base64, json, sys
print(json.dumps({"image_base64": base64.b64encode(open(sys.argv[1], "rb").read()).decode()}))' \
            "$image" > "$work/body.json"
        status="$(curl -s -o "$work/answer" -w '%{http_code}' -X POST "$base/v1/scenes" \
            -H 'Content-Type: application/json' --data-binary "@$work/body.json")"
    else
        status="$(curl -s -o "$work/answer" -w '%{http_code}' -X POST "$base/v1/scenes/upload" \
            -F "image=@$image;type=image/png")"
    fi
    local seconds=$((SECONDS - started))
    local peak settled scenes
    peak="$(hwm_kb "$server")"
    settle "$server"
    settled="$(hwm_kb "$server")"
    scenes="$(curl -s "$base/v1/scenes" | python3 -c 'import json, sys
d = json.load(sys.stdin)
items = d.get("scenes", d.get("items", [])) if isinstance(d, dict) else d
print(len(items))')"
    printf '%-24s HTTP %s in %3d s | VmHWM idle %7d kB, at answer %7d kB (+%d), settled %7d kB (+%d) | VmRSS %7d kB | scenes listed %s | %s\n' \
        "$label" "$status" "$seconds" "$idle" "$peak" "$((peak - idle))" "$settled" "$((settled - idle))" \
        "$(rss_kb "$server")" "$scenes" "$(head -c 150 "$work/answer" | tr -d '\n')"
    kill "$server"
    wait "$server" 2>/dev/null || true
    server=""
}

echo "sayso peak memory, $(date -u '+%Y-%m-%d %H:%M UTC'), load average $(cut -d' ' -f1-3 /proc/loadavg)"
for route in json multipart; do
    measure "640x480-$route" "$route" "$work/images/scene_640x480.png"
    measure "4096x4096-$route" "$route" "$work/images/scene_4096x4096.png"
    measure "4096x4096-$route-300s" "$route" "$work/images/scene_4096x4096.png" "$work/long.toml"
    measure "4097x4096-$route" "$route" "$work/images/over_4097x4096.png"
done
echo "load average at the end $(cut -d' ' -f1-3 /proc/loadavg)"
