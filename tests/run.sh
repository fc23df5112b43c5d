#!/usr/bin/env bash
# Runs the whole test suite: installs what the tests need when it is missing, runs `dotnet test CalBudget.sln`,
# and closes with one line "N passed, N failed" summed over the test projects. Exit status 0 only when all passed.
set -uo pipefail
cd "$(dirname "$0")/.."
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_SKIP_FIRST_TIME_EXPERIENCE=1

# Debian packages the tests use; installed only when missing (needs root, as on CI): fonts for the certificates'
# PDFs, poppler-utils for pdftoppm (a certificate page rendered to PNG) and pdfsig (the signature verified), chromium for the
# browser tests.
need=()
for pkg in fonts-dejavu-core poppler-utils chromium ${CALBUDGET_TEST_PACKAGES:-}; do
  dpkg -s "$pkg" >/dev/null 2>&1 || need+=("$pkg")
done
if [ ${#need[@]} -gt 0 ]; then
  if [ "$(id -u)" = 0 ]; then
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${need[@]}" >/dev/null
  else
    echo "missing Debian packages (install as root): ${need[*]}" >&2
  fi
fi

log=$(mktemp)
trap 'rm -f "$log"' EXIT
dotnet test CalBudget.sln -c Release --nologo 2>&1 | tee "$log"
status=${PIPESTATUS[0]}

# dotnet test prints one line per test project: "Passed!  - Failed: 0, Passed: 91, Skipped: 0, Total: 91, ..."
sum() { grep -E '^\s*(Passed|Failed)!' "$log" | grep -oE "$1: +[0-9]+" | grep -oE '[0-9]+' | awk '{s+=$1} END {print s+0}'; }
passed=$(sum Passed)
failed=$(sum Failed)
skipped=$(sum Skipped)
if [ "$status" -ne 0 ] && [ "$failed" -eq 0 ]; then
  failed=1 # the build or a test host failed before any test could report: count it as one failure
fi
if [ "$skipped" -gt 0 ]; then
  echo "$passed passed, $failed failed, $skipped skipped"
else
  echo "$passed passed, $failed failed"
fi
[ "$status" -eq 0 ] && [ "$failed" -eq 0 ]
