#!/usr/bin/env bash
# Starts a throwaway PostgreSQL cluster on loopback in a temporary directory, for the tests that need a real
# server, and prints the lines to export its address:
#
#     eval "$(bash .ci/postgres-cluster.sh start)"    # sets SAYSO_TEST_POSTGRES and SAYSO_TEST_POSTGRES_DIR
#     cargo test --locked
#     bash .ci/postgres-cluster.sh stop "$SAYSO_TEST_POSTGRES_DIR"
#
# Uses Debian's server binaries (/usr/lib/postgresql/<version>/bin, package `postgresql`). PostgreSQL refuses
# to run as root, so as root the cluster belongs to the `postgres` user the Debian package creates.
set -euo pipefail

bin_dir() {
    if command -v initdb >/dev/null 2>&1; then
        dirname "$(command -v initdb)"
        return
    fi
    local found
    found=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
    if [ -z "$found" ] || [ ! -x "$found/initdb" ]; then
        echo "no PostgreSQL server binaries found: apt-get install postgresql" >&2
        exit 1
    fi
    echo "$found"
}

as_owner() {
    if [ "$(id -u)" = 0 ]; then
        runuser -u postgres -- "$@"
    else
        "$@"
    fi
}

case "${1:-}" in
start)
    bin=$(bin_dir)
    dir=$(mktemp -d /tmp/sayso-postgres.XXXXXX)
    if [ "$(id -u)" = 0 ]; then chown postgres: "$dir"; fi
    # A port nothing listens on (a connection to it is refused).
    port=$((20000 + RANDOM % 20000))
    while (exec 3<>"/dev/tcp/127.0.0.1/$port") 2>/dev/null; do port=$((20000 + RANDOM % 20000)); done
    as_owner "$bin/initdb" -D "$dir/data" -U sayso --auth=trust -E UTF8 --no-sync >"$dir/initdb.log" 2>&1
    # fsync off: the tests kill service replicas, never this server, and the cluster is thrown away after.
    as_owner "$bin/pg_ctl" -D "$dir/data" -l "$dir/server.log" -w -t 60 \
        -o "-c listen_addresses=127.0.0.1 -p $port -k $dir -c fsync=off -c max_connections=200" start >/dev/null
    echo "export SAYSO_TEST_POSTGRES=postgres://sayso@127.0.0.1:$port/postgres"
    echo "export SAYSO_TEST_POSTGRES_DIR=$dir"
    ;;
stop)
    dir=${2:?usage: postgres-cluster.sh stop DIR}
    bin=$(bin_dir)
    as_owner "$bin/pg_ctl" -D "$dir/data" -m fast -w stop >/dev/null 2>&1 || true
    rm -rf "$dir"
    ;;
*)
    echo "usage: postgres-cluster.sh start | stop DIR" >&2
    exit 2
    ;;
esac
