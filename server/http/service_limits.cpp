#include "server/http/service_limits.h"

#include <sstream>

namespace foothold {
namespace {

template <typename T>
bool Positive(const char* name, T value, std::string* error) {
  if (value > 0) return true;
  std::ostringstream out;
  out << name << " = " << value << ": must be > 0";
  *error = out.str();
  return false;
}

}  // namespace

bool ServiceLimits::Validate(std::string* error) const {
  return Positive("max_body_bytes", max_body_bytes, error) &&
         Positive("max_points", max_points, error) && Positive("max_starts", max_starts, error) &&
         Positive("max_parameters", max_parameters, error) &&
         Positive("max_expression_length", max_expression_length, error) &&
         Positive("max_job_seconds", max_job_seconds, error) &&
         Positive("max_batch_jobs", max_batch_jobs, error) &&
         Positive("max_queue", max_queue, error) &&
         Positive("retry_after_seconds", retry_after_seconds, error) &&
         Positive("max_wait_seconds", max_wait_seconds, error) &&
         Positive("header_timeout_seconds", header_timeout_seconds, error) &&
         Positive("body_timeout_seconds", body_timeout_seconds, error) &&
         Positive("max_connections", max_connections, error) &&
         Positive("max_header_bytes", max_header_bytes, error);
}

}  // namespace foothold
