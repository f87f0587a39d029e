#!/bin/bash
# Samples the real server's CPU with perf while the load generator runs against it, then prints
# where the time went (classify-samples.py). Usage, from the repository root:
#   tests/SummaryService.LoadTest/Profiling/profile-ingest.sh OUT_DIR SECONDS [more load generator options]
# The load generator must be built in Release first (dotnet build -c Release tests/SummaryService.LoadTest).
set -euo pipefail
out=$1; seconds=$2; shift 2
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out"
dotnet run -c Release --no-build --project tests/SummaryService.LoadTest -- --series 100 --batch 4096 --per-bucket 2778 --buckets 360 --producers 4 --inflight 8 --queriers 2 --seconds 20 --durability wal --no-baseline --window-repeats 1 \
  --server-env DOTNET_PerfMapEnabled=1 --server-env DOTNET_EnableWriteXorExecute=0 "$@" > "$out/load.txt" 2>&1 &
runner=$!
pid=""
for _ in $(seq 1 300); do
  pid=$(grep -o 'pid [0-9]*' "$out/load.txt" | head -1 | cut -d' ' -f2 || true)
  [ -n "$pid" ] && break
  sleep 1
done
[ -n "$pid" ] || { echo "the server did not start; see $out/load.txt" >&2; wait $runner; exit 1; }
sleep 3
perf record -e cpu-clock -F 499 -g -p "$pid" -o "$out/server.perf" -- sleep "$seconds" > /dev/null 2>&1
wait $runner
perf script -i "$out/server.perf" 2> /dev/null | python3 "$here/classify-samples.py" | tee "$out/breakdown.txt"
