-- wrk profile: POST /api/v1/budgets/evaluate, six contributions, no Monte Carlo.
-- CALBUDGET_KEY=<key> wrk -t2 -c32 -d10s --latency -s tests/load/evaluate.lua http://127.0.0.1:5080/api/v1/budgets/evaluate
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
wrk.headers["Authorization"] = "Bearer " .. (os.getenv("CALBUDGET_KEY") or "")
wrk.body = '{"coverageProbability":0.9545,"contributions":[{"name":"reference","distribution":"normal","expandedUncertainty":2e-12,"coverageFactor":2},{"name":"resolution","distribution":"rectangular","halfWidth":5e-12},{"name":"repeatability","distribution":"student-t","standardUncertainty":3e-12,"degreesOfFreedom":9,"type":"A"},{"name":"orientation","distribution":"u-shaped","halfWidth":4e-11},{"name":"temperature","distribution":"triangular","halfWidth":1e-11},{"name":"aging","distribution":"rectangular","halfWidth":2e-11}]}'
