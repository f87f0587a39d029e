#!/usr/bin/env bash
# One node against three, in one run so the figures share the machine's load: the load generator
# (Release build) with the same workload against the single-process server, a cluster of one node
# and a cluster of three, each cluster on a fresh database of the PostgreSQL that local-cluster.sh
# started in DIR. Reports go to DIR/report-*.txt and DIR/report-*.json.
#   compare-nodes.sh DIR [load generator options...]
# The default workload: 100 series, 60 back-filled 10 s buckets of 1,000 values each (6 M values),
# 6 producers and 3 query clients (2 and 1 per node of three), 30 s live.
set -euo pipefail
dir=$(cd "${1:?give the folder local-cluster.sh started}" && pwd)
shift
repo=$(cd "$(dirname "$0")/../../.." && pwd)
[ -e "$dir/cluster.env" ] || { echo "no $dir/cluster.env: run local-cluster.sh start $dir first" >&2; exit 2; }
workload=(--series 100 --batch 4096 --per-bucket 1000 --buckets 60 --producers 6 --inflight 4 --queriers 3 --seconds 30 --no-baseline)
[ $# -gt 0 ] && workload=("$@")
postgres=$(grep '^Cluster__Postgres=' "$dir/cluster.env" | cut -d= -f2-)
redis=$(grep '^Cluster__Redis=' "$dir/cluster.env" | cut -d= -f2-)
port=$(sed -E 's/.*Port=([0-9]+).*/\1/' <<<"$postgres")
loadgen=(dotnet "$repo/tests/SummaryService.LoadTest/bin/Release/net10.0/SummaryService.LoadTest.dll")

run() {
  local name=$1
  shift
  echo "== $name" >&2
  "${loadgen[@]}" "${workload[@]}" --json-out "$dir/report-$name.json" "$@" | tee "$dir/report-$name.txt"
}

# A database of its own per cluster run: the partitions' tables would otherwise hold the last run's series.
cluster() {
  local nodes=$1 database="summary_nodes${1}_$(date +%s)"
  psql -h 127.0.0.1 -p "$port" -U summary -d postgres -qc "CREATE DATABASE $database"
  run "cluster-$nodes" --nodes "$nodes" --server-env Cluster__Mode=Orleans \
    --server-env "Cluster__Postgres=${postgres/Database=summaryservice/Database=$database}" \
    --server-env "Cluster__Redis=$redis" --server-env "Cluster__ClusterId=$database" \
    --server-env Persistence__SnapshotInterval=10m
}

# Snapshots (which in a cluster trim the log) held back in every run alike, so the log table's
# growth is the log's size and no run pays for snapshots the others skip.
run single --server-env Persistence__SnapshotInterval=10m
cluster 1
cluster 3
