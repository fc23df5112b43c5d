#!/usr/bin/env bash
# Load figure for POST /api/v1/budgets/evaluate (README, "Performance"): publishes the service, starts it on loopback with
# its own data directory, makes a key, warms up for 15 s, then measures three 10 s runs of wrk -t2 -c32.
set -euo pipefail
cd "$(dirname "$0")/../.."
command -v wrk >/dev/null || { apt-get update -qq && apt-get install -y -qq wrk >/dev/null; }
before_start() {
  CALBUDGET_KEY=$(dotnet "$work/app/CalBudget.Api.dll" keys create --role integration --name load | tail -n 1)
  export CALBUDGET_KEY
}
CALBUDGET_LOAD_ENVIRONMENT=Production
. tests/load/serve.sh
url=http://127.0.0.1:5080/api/v1/budgets/evaluate
wrk -t2 -c32 -d15s -s tests/load/evaluate.lua "$url" >/dev/null
for run in 1 2 3; do
  wrk -t2 -c32 -d10s --latency -s tests/load/evaluate.lua "$url" | grep -E 'Requests/sec|^ +(50|99)%|Non-2xx'
done
