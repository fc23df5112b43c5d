#!/usr/bin/env bash
# Figure for GET /api/v1/instruments/{id} with its newest runs (README, "Performance"): publishes the service, starts it in
# Development (demo records) with its own data directory, records N calibration runs (default 100,000) over the twelve demo
# instruments through the API, then measures 10 s of wrk -t2 reading instrument 1 with 1, 4 and 16 connections.
set -euo pipefail
cd "$(dirname "$0")/../.."
command -v wrk >/dev/null || { apt-get update -qq && apt-get install -y -qq wrk >/dev/null; }
n=${1:-100000}
. tests/load/serve.sh
export CALBUDGET_KEY=cbk_de00000000000001_demo-technician-key-not-for-production
# ids are sequential: the demo's four runs, then these; wrk is stopped once the last one exists
wrk -t2 -c8 -d1h -s tests/load/create_runs.lua http://127.0.0.1:5080/api/v1/calibrations >/dev/null &
filler=$!
until curl -sf -o /dev/null -H "Authorization: Bearer $CALBUDGET_KEY" "http://127.0.0.1:5080/api/v1/calibrations/$((n + 4))"; do sleep 2; done
kill $filler; wait $filler 2>/dev/null || true
echo "runs recorded: $n"
url=http://127.0.0.1:5080/api/v1/instruments/1
wrk -t2 -c16 -d10s -s tests/load/read.lua "$url" >/dev/null
for connections in 1 4 16; do
  echo "$connections connection(s):"
  wrk -t$(( connections < 2 ? 1 : 2 )) -c$connections -d10s --latency -s tests/load/read.lua "$url" | grep -E 'Requests/sec|^ +(50|99)%|Non-2xx'
done
