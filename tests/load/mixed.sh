#!/usr/bin/env bash
# Figures for the mixed read/write profile and POST /api/v1/stability with 100,000 points (README, "Performance"):
# publishes the service, starts it in Development (demo records), then: three 10 s runs of wrk -t2 -c16 with
# tests/load/mixed.lua; three 10 s runs of wrk -t2 -c4 posting 100,000 readings for oadev at octave factors; then the
# mixed profile for MINUTES (default 10), printing the service's resident memory (it must not grow) and the size of
# SQLite's write-ahead log each minute.
set -euo pipefail
cd "$(dirname "$0")/../.."
command -v wrk >/dev/null || { apt-get update -qq && apt-get install -y -qq wrk >/dev/null; }
minutes=${1:-10}
. tests/load/serve.sh
export CALBUDGET_KEY=cbk_de00000000000001_demo-technician-key-not-for-production
rss() { awk '/VmRSS/ { printf "%.0f MB", $2 / 1024 }' "/proc/$server/status"; }
wal() { stat -c %s "$work/data/calbudget.db-wal" 2>/dev/null | awk '{ printf "%.1f MB", $1 / 1048576 }'; }
wrk -t2 -c16 -d10s -s tests/load/mixed.lua http://127.0.0.1:5080 >/dev/null   # warm-up
for run in 1 2 3; do
  echo "mixed $run: $(wrk -t2 -c16 -d10s --latency -s tests/load/mixed.lua http://127.0.0.1:5080 | grep -E 'Requests/sec|^ +(50|99)%|Non-2xx|server error' | tr -s ' ' | tr '\n' ' ')"
done
awk 'BEGIN { srand(5); printf "{\"dataType\":\"frequency\",\"tau0\":1,\"statistics\":[\"oadev\"],\"values\":["; for (k = 0; k < 100000; k++) printf "%s%.6e", (k ? "," : ""), 2e-9 + (rand() - 0.5) * 1e-11; print "]}" }' > "$work/stability.json"
cat > "$work/stability.lua" <<LUA
local f = io.open("$work/stability.json", "rb"); local body = f:read("*a"); f:close()
wrk.method = "POST"; wrk.body = body
wrk.headers["Content-Type"] = "application/json"; wrk.headers["Authorization"] = "Bearer $CALBUDGET_KEY"
LUA
for run in 1 2 3; do
  echo "stability 1e5 $run: $(wrk -t2 -c4 -d10s --latency -s "$work/stability.lua" http://127.0.0.1:5080/api/v1/stability | grep -E 'Requests/sec|^ +(50|99)%|Non-2xx' | tr -s ' ' | tr '\n' ' ')"
done
echo "memory before the long run: $(rss)"
for minute in $(seq "$minutes"); do
  out=$(wrk -t2 -c16 -d60s -s tests/load/mixed.lua http://127.0.0.1:5080 | grep -E 'Requests/sec|Non-2xx' | tr -s ' ' | tr '\n' ' ')
  echo "minute $minute: $out resident $(rss), write-ahead log $(wal)"
done
