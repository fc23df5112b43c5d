# Sourced by the load scripts: publishes the service to a temporary folder and starts it on http://127.0.0.1:5080 with
# its own data directory (in Development, with the demo records and keys, unless CALBUDGET_LOAD_ENVIRONMENT says
# otherwise); waits for /health; stops it and removes the folder on exit (CALBUDGET_KEEP=1 keeps the folder).
# Sets: work (the folder), server (the service's pid). Call before_start (optional function) ahead of the start.
work=$(mktemp -d)
dotnet publish src/CalBudget.Api -c Release -o "$work/app" --nologo -v quiet
export CalBudget__DataDirectory="$work/data" ASPNETCORE_ENVIRONMENT="${CALBUDGET_LOAD_ENVIRONMENT:-Development}"
# the load generators use one key from one address: the abuse limits are raised for them (README, "Performance")
export CalBudget__RequestsPer10Seconds=100000000 CalBudget__SignInAttemptsPerMinute=100000000
if declare -F before_start >/dev/null; then before_start; fi
dotnet "$work/app/CalBudget.Api.dll" --urls http://127.0.0.1:5080 > "$work/server.log" 2>&1 &
server=$!
trap 'kill $server 2>/dev/null; [ -n "${CALBUDGET_KEEP:-}" ] || rm -rf "$work"' EXIT
for _ in $(seq 50); do curl -sf http://127.0.0.1:5080/health >/dev/null && break; sleep 0.2; done
