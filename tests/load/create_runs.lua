-- wrk profile: records calibration runs over the twelve demo instruments, until stopped.
-- Used by instrument_read.sh to fill the database.
local key = os.getenv("CALBUDGET_KEY") or ""
local counter = 0

function request()
  counter = counter + 1
  local body = string.format('{"instrumentId":%d,"referenceId":2,"comparator":{"name":"load counter","resolution":1e-12},"gateTimeSeconds":1,' ..
    '"posture":{"up":"+z"},"condition":"as-found","startedAt":"2026-01-01T00:00:00Z","notes":"load run %d"}', counter % 12 + 1, counter)
  return wrk.format("POST", nil, { ["Content-Type"] = "application/json", ["Authorization"] = "Bearer " .. key }, body)
end
