#!/usr/bin/env bash
# Starts (or stops) a throwaway PostgreSQL and Redis on loopback for the scale-out tests and benchmark.
#
#   eval "$(bash scripts/scale-services.sh start /tmp/penumbra-scale)"   # prints DATABASE_URL=… and REDIS_URL=…
#   bash scripts/scale-services.sh stop /tmp/penumbra-scale
#
# PostgreSQL's initdb refuses to run as root, so as root the cluster belongs to the `postgres` system user. Both servers
# listen on 127.0.0.1 only, keep their data in the given folder and trust local connections: test use only.
set -euo pipefail

cmd="${1:-}"
dir="${2:-/tmp/penumbra-scale}"
pg_port="${PENUMBRA_PG_PORT:-55432}"
redis_port="${PENUMBRA_REDIS_PORT:-56379}"

pg_bin=""
for candidate in /usr/lib/postgresql/*/bin; do [ -x "$candidate/initdb" ] && pg_bin="$candidate"; done
if [ -z "$pg_bin" ] && command -v initdb >/dev/null; then pg_bin="$(dirname "$(command -v initdb)")"; fi

as_pg() {
  if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

case "$cmd" in
  start)
    [ -n "$pg_bin" ] || { echo "PostgreSQL is not installed (apt-get install postgresql)" >&2; exit 1; }
    command -v redis-server >/dev/null || { echo "redis-server is not installed (apt-get install redis-server)" >&2; exit 1; }
    mkdir -p "$dir"
    if [ "$(id -u)" = 0 ]; then chown postgres "$dir"; fi
    if [ ! -f "$dir/pg/PG_VERSION" ]; then
      as_pg "$pg_bin/initdb" -D "$dir/pg" -U penumbra --auth=trust --encoding=UTF8 --no-locale >"$dir/initdb.log" 2>&1 \
        || { cat "$dir/initdb.log" >&2; exit 1; }
    fi
    if ! as_pg "$pg_bin/pg_ctl" -D "$dir/pg" status >/dev/null 2>&1; then
      as_pg "$pg_bin/pg_ctl" -D "$dir/pg" -l "$dir/pg.log" -w -t 60 \
        -o "-h 127.0.0.1 -p $pg_port -k $dir -c fsync=off -c max_connections=300 -c shared_buffers=64MB" start >/dev/null \
        || { cat "$dir/pg.log" >&2; exit 1; }
    fi
    if ! redis-cli -p "$redis_port" ping >/dev/null 2>&1; then
      redis-server --bind 127.0.0.1 --port "$redis_port" --save '' --appendonly no --daemonize yes \
        --dir "$dir" --logfile "$dir/redis.log" --pidfile "$dir/redis.pid" >/dev/null
      for _ in $(seq 1 50); do redis-cli -p "$redis_port" ping >/dev/null 2>&1 && break; sleep 0.1; done
    fi
    echo "export DATABASE_URL=postgres://penumbra@127.0.0.1:$pg_port/postgres"
    echo "export REDIS_URL=redis://127.0.0.1:$redis_port"
    ;;
  stop)
    redis-cli -p "$redis_port" shutdown nosave >/dev/null 2>&1 || true
    if [ -n "$pg_bin" ] && [ -d "$dir/pg" ]; then as_pg "$pg_bin/pg_ctl" -D "$dir/pg" -m fast stop >/dev/null 2>&1 || true; fi
    ;;
  *)
    echo "usage: scale-services.sh start|stop [folder]" >&2
    exit 2
    ;;
esac
