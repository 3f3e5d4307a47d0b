// Routes for the event stream (Server-Sent Events), /metrics, /healthz and the OpenAPI document.
#include <memory>

#include "route.h"
#include "tonewarden/http/limits.h"
#include "tonewarden/http/openmetrics.h"

namespace tonewarden::http::detail {
namespace {

std::string sse_frame(const StreamEvent& e) {
  std::string out = "id: " + std::to_string(e.seq) + "\nevent: " + e.type + "\n";
  // One "data:" line per line of payload, as the SSE format requires.
  size_t start = 0;
  while (start <= e.data.size()) {
    size_t end = e.data.find('\n', start);
    if (end == std::string::npos) end = e.data.size();
    out += "data: " + e.data.substr(start, end - start) + "\n";
    start = end + 1;
  }
  out += "\n";
  return out;
}

void get_stream(Ctx& c) {
  ServerState& st = c.state;
  // Each open stream holds a pool thread for its whole life: cap them, answer 503 beyond.
  if (st.streams_open.fetch_add(1) >= st.config.max_event_streams) {
    st.streams_open.fetch_sub(1);
    st.streams_refused.fetch_add(1);
    c.res.set_header("Retry-After", "5");
    throw ApiError(503, "too_many_streams",
                   "all " + std::to_string(st.config.max_event_streams) +
                       " event streams are in use; retry later");
  }
  std::shared_ptr<EventSubscription> sub = st.hub.subscribe();
  if (!sub) {
    st.streams_open.fetch_sub(1);
    throw ApiError(503, "unavailable", "the server is stopping");
  }
  c.res.status = 200;
  c.res.set_header("Cache-Control", "no-store");
  auto opened = std::make_shared<bool>(false);
  ServerState* state = &st;
  c.res.set_chunked_content_provider(
      "text/event-stream",
      [sub, opened](size_t, httplib::DataSink& sink) {
        std::string out;
        if (!*opened) {
          *opened = true;
          out = "retry: " + std::to_string(kEventRetryMs) + "\n: stream open\n\n";
          return sink.write(out.data(), out.size());
        }
        std::vector<StreamEvent> events;
        if (!sub->wait_and_take(&events, std::chrono::seconds(kEventHeartbeatS))) {
          sink.done();  // hub closed: the server is stopping
          return true;
        }
        if (events.empty()) out = ": keepalive\n\n";  // also detects a vanished client
        for (const auto& e : events) out += sse_frame(e);
        return sink.write(out.data(), out.size());
      },
      [state, sub](bool) mutable {
        sub.reset();
        state->streams_open.fetch_sub(1);
      });
}

void get_metrics(Ctx& c) {
  const Providers& p = c.state.providers;
  StatusInfo status;
  std::vector<Reading> readings;
  std::vector<AlarmState> alarms;
  MetricsInput in;
  if (p.status) {
    status = p.status->status();
    in.status = &status;
  }
  if (p.live) {
    readings = p.live->readings();
    in.readings = &readings;
  }
  if (p.alarms) {
    alarms = p.alarms->states();
    in.alarms = &alarms;
  }
  in.http = c.state.stats();
  c.res.status = 200;
  c.res.set_content(render_openmetrics(in), std::string(kOpenMetricsContentType));
}

void get_healthz(Ctx& c) {
  c.res.set_header("Cache-Control", "no-store");
  if (c.state.providers.status == nullptr) {
    c.res.status = 503;
    c.res.set_content("unhealthy: no status provider\n", "text/plain; charset=utf-8");
    return;
  }
  const StatusInfo s = c.state.providers.status->status();
  if (s.healthy) {
    c.res.status = 200;
    c.res.set_content("ok\n", "text/plain; charset=utf-8");
  } else {
    c.res.status = 503;
    c.res.set_content("unhealthy: " + s.unhealthy_reason + "\n", "text/plain; charset=utf-8");
  }
}

}  // namespace

void add_system_routes(std::vector<Route>& routes) {
  {
    Route r{"GET", "/api/v1/stream", "live",
            "Server-Sent Events: 'readings' and 'alarm' events; the id is a sequence number, "
            "and a gap in it means this client fell behind and lost the oldest events"};
    r.success_schema = "";
    r.success_type = "text/event-stream";
    r.success_description = "event stream; ': keepalive' comments every " +
                            std::to_string(kEventHeartbeatS) + " s when idle";
    r.errors = {503};
    r.handler = get_stream;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/openapi.json", "meta", "This document"};
    r.success_schema = "";
    r.success_description = "OpenAPI 3 document";
    r.handler = [](Ctx& c) {
      c.res.status = 200;
      c.res.set_content(c.state.openapi_json, "application/json");
    };
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/metrics", "meta", "OpenMetrics exposition for scrapers"};
    r.success_schema = "";
    r.success_type = std::string(kOpenMetricsContentType);
    r.success_description = "OpenMetrics 1.0 text ending in '# EOF'";
    r.handler = get_metrics;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/healthz", "meta", "Liveness: 200 'ok' or 503 with the reason"};
    r.success_schema = "";
    r.success_type = "text/plain";
    r.success_description = "'ok'";
    r.errors = {503};
    r.handler = get_healthz;
    routes.push_back(std::move(r));
  }
}

}  // namespace tonewarden::http::detail
