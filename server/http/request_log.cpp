#include "server/http/request_log.h"

#include <spdlog/sinks/stdout_sinks.h>
#include <spdlog/spdlog.h>

#include <cstdio>

#include "server/http/log_codec.h"

namespace foothold {

RequestLog::RequestLog(LogFormat format) : format_(format) {
  logger_ = std::make_shared<spdlog::logger>("foothold",
                                             std::make_shared<spdlog::sinks::stderr_sink_mt>());
  // JSON lines carry their own fields; text lines get a time and level prefix.
  logger_->set_pattern(format == LogFormat::kJson ? "%v" : "%Y-%m-%dT%H:%M:%S.%eZ %l %v",
                       spdlog::pattern_time_type::utc);
  logger_->flush_on(spdlog::level::info);
}

void RequestLog::Request(const std::string& method, const std::string& target, int status,
                         double latency_ms, const std::string& job_id) {
  if (format_ == LogFormat::kJson) {
    logger_->info(EncodeRequestLogLine(method, target, status, latency_ms, job_id));
    return;
  }
  char latency[32];
  std::snprintf(latency, sizeof(latency), "%.1f", latency_ms);
  logger_->info("{} {} {} {}ms{}", method, target, status, latency,
                job_id.empty() ? "" : " job=" + job_id);
}

void RequestLog::Job(const std::string& job_id, const std::string& state, double seconds,
                     const std::string& brief) {
  if (format_ == LogFormat::kJson) {
    logger_->info(EncodeJobLogLine(job_id, state, seconds, brief));
    return;
  }
  logger_->info("job {} {} in {:.3f}s: {}", job_id, state, seconds, brief);
}

void RequestLog::Info(const std::string& message) {
  if (format_ == LogFormat::kJson) {
    logger_->info(EncodeMessageLogLine("info", message));
  } else {
    logger_->info("{}", message);
  }
}

void RequestLog::Error(const std::string& message) {
  if (format_ == LogFormat::kJson) {
    logger_->error(EncodeMessageLogLine("error", message));
  } else {
    logger_->error("{}", message);
  }
}

}  // namespace foothold
