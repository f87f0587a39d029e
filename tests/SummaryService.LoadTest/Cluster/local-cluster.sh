#!/usr/bin/env bash
# A cluster on this machine's loopback, from Debian's postgresql and redis-server packages (as the
# cluster tests start them): PostgreSQL made by initdb in a folder of its own, Redis keeping
# nothing on disk, and optionally that many server nodes in Orleans mode.
#   local-cluster.sh start DIR [NODES]   start them under DIR; write DIR/cluster.env (the Cluster__
#                                        settings every node needs) and print them
#   local-cluster.sh stop DIR            stop everything started under DIR (the folder stays)
# Node i (from 1) serves gRPC on 127.0.0.1 port 5170 + 10 i (5180, 5190, ...) and JSON and the page
# on the port after it, and talks to the other nodes on port 11110 + i. The load generator starts
# its own nodes (compare-nodes.sh gives it the printed settings).
# Environment: PGPORT (default 55432), REDIS_PORT (default 56379), SERVER_DLL (default the Release
# build of src/SummaryService.Server), CLUSTER_PARTITIONS (default 64).
set -euo pipefail
command=${1:?usage: local-cluster.sh start|stop DIR [NODES]}
dir=$(mkdir -p "${2:?give a folder}" && cd "$2" && pwd)
repo=$(cd "$(dirname "$0")/../../.." && pwd)
pg_port=${PGPORT:-55432}
redis_port=${REDIS_PORT:-56379}
bin=$(ls -d /usr/lib/postgresql/*/bin | sort -V | tail -1)

# PostgreSQL refuses to run as root: as root its programs run as the postgres account.
as_postgres() { if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi; }

case "$command" in
start)
  nodes=${3:-0}
  if [ ! -d "$dir/postgres" ]; then
    mkdir -p "$dir/postgres"
    if [ "$(id -u)" = 0 ]; then chown postgres "$dir/postgres"; fi
    as_postgres "$bin/initdb" -D "$dir/postgres" -A trust -U summary --no-sync >/dev/null
  fi
  as_postgres "$bin/pg_ctl" start -w -t 60 -D "$dir/postgres" -l "$dir/postgres/server.log" -o "-p $pg_port -h 127.0.0.1 -k $dir/postgres" >/dev/null
  "$bin/psql" -h 127.0.0.1 -p "$pg_port" -U summary -d postgres -tAc "SELECT 1 FROM pg_database WHERE datname = 'summaryservice'" | grep -q 1 \
    || "$bin/psql" -h 127.0.0.1 -p "$pg_port" -U summary -d postgres -qc "CREATE DATABASE summaryservice"
  redis-server --port "$redis_port" --bind 127.0.0.1 --save "" --appendonly no --daemonize yes --pidfile "$dir/redis.pid" --logfile "$dir/redis.log"
  cat > "$dir/cluster.env" <<SETTINGS
Cluster__Mode=Orleans
Cluster__Postgres=Host=127.0.0.1;Port=$pg_port;Username=summary;Database=summaryservice
Cluster__Redis=127.0.0.1:$redis_port
Cluster__Partitions=${CLUSTER_PARTITIONS:-64}
SETTINGS
  dll=${SERVER_DLL:-$repo/src/SummaryService.Server/bin/Release/net10.0/SummaryService.Server.dll}
  for i in $(seq 1 "$nodes"); do
    grpc=$((5170 + 10 * i))
    (
      set -a && . "$dir/cluster.env" && set +a
      export Cluster__SiloPort=$((11110 + i)) Cluster__GatewayPort=$((30000 + i))
      export Kestrel__Endpoints__Grpc__Url=http://127.0.0.1:$grpc Kestrel__Endpoints__Http__Url=http://127.0.0.1:$((grpc + 1))
      export Persistence__DataDirectory=$dir/node$i
      cd "$(dirname "$dll")" && exec dotnet "$dll" >"$dir/node$i.log" 2>&1
    ) &
    echo $! > "$dir/node$i.pid"
    echo "node $i: gRPC http://127.0.0.1:$grpc, page http://127.0.0.1:$((grpc + 1))/ (log $dir/node$i.log)"
  done
  cat "$dir/cluster.env"
  ;;
stop)
  for pidfile in "$dir"/node*.pid; do
    [ -e "$pidfile" ] || continue
    # SIGTERM: each node hands over its partitions, which write their final snapshots.
    kill "$(cat "$pidfile")" 2>/dev/null || true
    rm -f "$pidfile"
  done
  wait 2>/dev/null || true
  sleep 2
  [ -e "$dir/redis.pid" ] && kill "$(cat "$dir/redis.pid")" 2>/dev/null || true
  as_postgres "$bin/pg_ctl" stop -m fast -D "$dir/postgres" >/dev/null || true
  ;;
*)
  echo "unknown command $command; use start or stop" >&2
  exit 2
  ;;
esac
