#!/usr/bin/env bash
# The schema-driven API check: schemathesis (PyPI: `pip install schemathesis`) against the document the
# service serves, with a demo scene and a conversation registered first so ids 1 exist. Not run by
# `cargo test` (it needs Python and a built binary); see DEVELOPERS.md.
#
#   bash tests/api/schema_check.sh [path/to/sayso] [examples per operation]
set -euo pipefail
binary="$(realpath "${1:-target/release/sayso}")"
examples="${2:-20}"
config="$(realpath "$(dirname "$0")/schemathesis.toml")"
work="$(mktemp -d)"
token="juniper-lane-schema-check-01"
cat > "$work/sayso.toml" <<TOML
# Requests without a token are sent on purpose, many of them: the failed-login throttle is raised so they
# are answered 401 (as documented) rather than 429.
rate_per_second = 10000.0
rate_burst = 10000
auth_failures_per_minute = 60000.0
auth_failure_burst = 10000
[[operators]]
name = "mira"
token = "$token"
TOML
"$binary" serve --config "$work/sayso.toml" --data-dir "$work/data" --port 0 > "$work/serve.out" 2> "$work/serve.err" &
server=$!
trap 'kill "$server" 2>/dev/null; wait "$server" 2>/dev/null; rm -rf "$work"' EXIT
for _ in $(seq 100); do
    port="$(grep -oE '127\.0\.0\.1:[0-9]+' "$work/serve.out" | head -1 | cut -d: -f2 || true)"
    [ -n "$port" ] && break
    sleep 0.1
done
base="http://127.0.0.1:$port"
auth="Authorization: Bearer $token"
curl -sf -X POST "$base/v1/scenes" -H "$auth" -H 'Content-Type: application/json' \
    -d '{"demo": "kitchen_breakfast"}' > /dev/null
curl -sf -X POST "$base/v1/conversations" -H "$auth" -H 'Content-Type: application/json' \
    -d '{"scene_id": 1}' > /dev/null
# Run from the scratch directory, so schemathesis's cache stays out of the repository.
cd "$work"
st --config-file "$config" run "$base/v1/openapi.json" -H "$auth" --max-examples "$examples" --request-timeout 30 --workers 1
