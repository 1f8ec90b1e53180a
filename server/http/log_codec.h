#pragma once
// The JSON lines of the daemon's log (--log-format json), kept with the other codecs so
// that the log itself knows no JSON library. Invalid UTF-8 in an echoed target or message
// is replaced, never an exception.

#include <string>

namespace foothold {

// {"event": "request", "method", "target", "status", "latency_ms"[, "job"]}
std::string EncodeRequestLogLine(const std::string& method, const std::string& target, int status,
                                 double latency_ms, const std::string& job_id);
// {"event": "job", "job", "state", "seconds", "report"}
std::string EncodeJobLogLine(const std::string& job_id, const std::string& state, double seconds,
                             const std::string& brief);
// {"event": "info" | "error", "message"}
std::string EncodeMessageLogLine(const std::string& event, const std::string& message);

}  // namespace foothold
