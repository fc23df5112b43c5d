-- wrk profile: an authenticated GET of the URL given. CALBUDGET_KEY=<key> wrk ... -s tests/load/read.lua <url>
wrk.headers["Authorization"] = "Bearer " .. (os.getenv("CALBUDGET_KEY") or "")
