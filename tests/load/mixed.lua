-- wrk profile: staff and LIMS traffic mixed: of every 20 requests, 12 read an instrument with its runs, 4 list
-- calibration runs, 3 evaluate a budget and 1 records a calibration run (a write through SQLite's lock).
-- CALBUDGET_KEY=<key> wrk -t2 -c16 -d10s --latency -s tests/load/mixed.lua http://127.0.0.1:5080
local key = os.getenv("CALBUDGET_KEY") or ""
local counter = 0
local json = { ["Content-Type"] = "application/json", ["Authorization"] = "Bearer " .. key }
local auth = { ["Authorization"] = "Bearer " .. key }
local evaluate = '{"contributions":[{"name":"reference","distribution":"normal","expandedUncertainty":2e-12,"coverageFactor":2},' ..
  '{"name":"resolution","distribution":"rectangular","halfWidth":5e-12},{"name":"repeatability","distribution":"normal","standardUncertainty":3e-12,"degreesOfFreedom":9,"type":"A"}]}'

function request()
  counter = counter + 1
  local slot = counter % 20
  if slot < 12 then
    return wrk.format("GET", "/api/v1/instruments/" .. (counter % 12 + 1), auth)
  elseif slot < 16 then
    return wrk.format("GET", "/api/v1/calibrations?limit=20&instrumentId=" .. (counter % 12 + 1), auth)
  elseif slot < 19 then
    return wrk.format("POST", "/api/v1/budgets/evaluate", json, evaluate)
  end
  local body = string.format('{"instrumentId":%d,"referenceId":2,"comparator":{"name":"load counter","resolution":1e-12},"gateTimeSeconds":1,' ..
    '"posture":{"up":"+z"},"condition":"as-found","startedAt":"2026-01-01T00:00:00Z","notes":"mixed %d"}', counter % 12 + 1, counter)
  return wrk.format("POST", "/api/v1/calibrations", json, body)
end

function response(status, headers, body)
  if status >= 500 then
    io.stderr:write("server error " .. status .. "\n")
  end
end
