#include "server/http/log_codec.h"

#include "server/json_codec.h"

namespace foothold {
namespace {

std::string Dump(const Json& line) {
  return line.dump(-1, ' ', false, Json::error_handler_t::replace);
}

}  // namespace

std::string EncodeRequestLogLine(const std::string& method, const std::string& target, int status,
                                 double latency_ms, const std::string& job_id) {
  Json line = {{"event", "request"},
               {"method", method},
               {"target", target},
               {"status", status},
               {"latency_ms", latency_ms}};
  if (!job_id.empty()) line["job"] = job_id;
  return Dump(line);
}

std::string EncodeJobLogLine(const std::string& job_id, const std::string& state, double seconds,
                             const std::string& brief) {
  return Dump(Json{{"event", "job"},
                   {"job", job_id},
                   {"state", state},
                   {"seconds", seconds},
                   {"report", brief}});
}

std::string EncodeMessageLogLine(const std::string& event, const std::string& message) {
  return Dump(Json{{"event", event}, {"message", message}});
}

}  // namespace foothold
