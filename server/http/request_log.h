#pragma once
// The daemon's log: one line per request and one per finished job, as text or JSON lines,
// through spdlog on stderr.

#include <memory>
#include <string>

namespace spdlog {
class logger;
}

namespace foothold {

enum class LogFormat { kText, kJson };

class RequestLog {
 public:
  explicit RequestLog(LogFormat format);

  void Request(const std::string& method, const std::string& target, int status, double latency_ms,
               const std::string& job_id);
  void Job(const std::string& job_id, const std::string& state, double seconds,
           const std::string& brief);
  void Info(const std::string& message);
  void Error(const std::string& message);

 private:
  LogFormat format_;
  std::shared_ptr<spdlog::logger> logger_;
};

}  // namespace foothold
