-- wrk's script for `npm run bench` (scripts/bench/wrk.ts writes the data and reads what done() prints).
--
-- TALLYWOOD_WRK_DATA names a Lua file that returns
--   { method = "POST", path = "/api/check-ins", origin = "http://…", cookies = { "authjs.session-token=…", … },
--     bodies = { '{"longitude":…}', … } }
-- Thread k (from 0) sends the cookies k+1, k+1+T, k+1+2T, … (T threads) in turn, and the bodies
-- k+1, k+1+T, …: with as many threads as connections, each connection is one forager with one
-- session of their own and positions of their own. (wrk's Lua has no hook per connection, only per
-- thread, so that is how a connection keeps its own cookie.) Without cookies the requests are sent
-- signed out; without bodies, with none. A body holding @KEY@ (a harvest entry's idempotency key)
-- is sent with a key of its own each time: the thread, the request's number and the start time.
local data = dofile(os.getenv("TALLYWOOD_WRK_DATA"))

local threads = {}
local created = 0

function setup(thread)
  thread:set("index", created)
  thread:set("threadCount", data.threads)
  created = created + 1
  table.insert(threads, thread)
end

local requests = {}
local keyed = {}
local sent = 0
local started = tostring(os.time())
statuses = {}
verdicts = {}

function init(args)
  local mine = {}
  local cookies = data.cookies or {}
  for i = index + 1, #cookies, threadCount do
    table.insert(mine, cookies[i])
  end
  local bodies = data.bodies or {}
  local myBodies = {}
  for i = index + 1, #bodies, threadCount do
    table.insert(myBodies, bodies[i])
  end
  if #myBodies == 0 then
    myBodies = { false }
  end
  for i, body in ipairs(myBodies) do
    local headers = { ["Origin"] = data.origin }
    if #mine > 0 then
      headers["Cookie"] = mine[(i - 1) % #mine + 1]
    end
    if body and string.find(body, "@KEY@", 1, true) then
      headers["Content-Type"] = "application/json"
      table.insert(requests, false)
      table.insert(keyed, { headers = headers, body = body })
    elseif body then
      headers["Content-Type"] = "application/json"
      table.insert(requests, wrk.format(data.method, data.path, headers, body))
    else
      table.insert(requests, wrk.format(data.method, data.path, headers))
    end
  end
end

function request()
  sent = sent + 1
  local i = (sent - 1) % #requests + 1
  if requests[i] then
    return requests[i]
  end
  local k = keyed[(sent - 1) % #keyed + 1]
  local key = "bench-" .. started .. "-" .. index .. "-" .. sent
  return wrk.format(data.method, data.path, k.headers, (string.gsub(k.body, "@KEY@", key)))
end

function response(status, headers, body)
  local s = tostring(status)
  statuses[s] = (statuses[s] or 0) + 1
  local verdict = body and string.match(body, '"verdict":"([%a-]+)"') or "none"
  verdicts[verdict] = (verdicts[verdict] or 0) + 1
end

local function counts(name)
  local total = {}
  for _, thread in ipairs(threads) do
    local t = thread:get(name)
    if t then
      for k, v in pairs(t) do
        total[k] = (total[k] or 0) + v
      end
    end
  end
  local parts = {}
  for k, v in pairs(total) do
    table.insert(parts, string.format('"%s":%d', k, v))
  end
  return "{" .. table.concat(parts, ",") .. "}"
end

-- One line the bench parses: latencies in microseconds, duration in microseconds.
function done(summary, latency, requests)
  local e = summary.errors
  io.write(string.format(
    'TALLYWOOD-WRK {"requests":%d,"durationUs":%d,"bytes":%d,"meanUs":%.1f,"maxUs":%d,"p50Us":%d,"p90Us":%d,"p95Us":%d,"p99Us":%d,' ..
      '"errors":{"connect":%d,"read":%d,"write":%d,"status":%d,"timeout":%d},"statuses":%s,"verdicts":%s}\n',
    summary.requests, summary.duration, summary.bytes, latency.mean, latency.max,
    latency:percentile(50), latency:percentile(90), latency:percentile(95), latency:percentile(99),
    e.connect, e.read, e.write, e.status, e.timeout, counts("statuses"), counts("verdicts")))
end
