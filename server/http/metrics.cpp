#include "server/http/metrics.h"

#include <sstream>

namespace foothold {

constexpr std::array<double, 10> Metrics::kFitBuckets;

void Metrics::CountRequest(const std::string& method, const std::string& route, int status) {
  std::lock_guard<std::mutex> lock(mutex_);
  requests_[{method, route}][status]++;
}

void Metrics::ObserveFit(const std::string& state, double seconds) {
  std::lock_guard<std::mutex> lock(mutex_);
  jobs_finished_[state]++;
  for (size_t i = 0; i < kFitBuckets.size(); ++i) {
    if (seconds <= kFitBuckets[i]) fit_buckets_[i]++;
  }
  fit_count_++;
  fit_sum_seconds_ += seconds;
}

std::string Metrics::Render(const MetricsSnapshotInputs& inputs) const {
  std::lock_guard<std::mutex> lock(mutex_);
  std::ostringstream out;
  out << "# HELP foothold_http_requests_total HTTP requests by method, route template and "
         "status.\n# TYPE foothold_http_requests_total counter\n";
  for (const auto& [key, by_status] : requests_) {
    for (const auto& [status, count] : by_status) {
      out << "foothold_http_requests_total{method=\"" << key.first << "\",route=\"" << key.second
          << "\",status=\"" << status << "\"} " << count << '\n';
    }
  }
  out << "# HELP foothold_jobs Jobs in the store by state.\n# TYPE foothold_jobs gauge\n";
  for (const auto& [state, count] : inputs.jobs_by_state) {
    out << "foothold_jobs{state=\"" << ToString(state) << "\"} " << count << '\n';
  }
  const auto queued = inputs.jobs_by_state.find(JobState::kQueued);
  out << "# HELP foothold_queue_length Jobs waiting for a worker.\n"
         "# TYPE foothold_queue_length gauge\nfoothold_queue_length "
      << (queued == inputs.jobs_by_state.end() ? 0 : queued->second) << '\n';
  out << "# HELP foothold_workers_busy Fit workers running a job.\n"
         "# TYPE foothold_workers_busy gauge\nfoothold_workers_busy "
      << inputs.busy_workers << '\n';
  out << "# HELP foothold_workers Fit worker threads.\n# TYPE foothold_workers gauge\n"
         "foothold_workers "
      << inputs.num_workers << '\n';
  out << "# HELP foothold_open_connections Open client connections.\n"
         "# TYPE foothold_open_connections gauge\nfoothold_open_connections "
      << inputs.open_connections << '\n';
  out << "# HELP foothold_jobs_finished_total Jobs finished by this process, by final state.\n"
         "# TYPE foothold_jobs_finished_total counter\n";
  for (const auto& [state, count] : jobs_finished_) {
    out << "foothold_jobs_finished_total{state=\"" << state << "\"} " << count << '\n';
  }
  out << "# HELP foothold_fit_duration_seconds Wall time of finished fits.\n"
         "# TYPE foothold_fit_duration_seconds histogram\n";
  for (size_t i = 0; i < kFitBuckets.size(); ++i) {
    out << "foothold_fit_duration_seconds_bucket{le=\"" << kFitBuckets[i] << "\"} "
        << fit_buckets_[i] << '\n';
  }
  out << "foothold_fit_duration_seconds_bucket{le=\"+Inf\"} " << fit_count_ << '\n';
  out << "foothold_fit_duration_seconds_sum " << fit_sum_seconds_ << '\n';
  out << "foothold_fit_duration_seconds_count " << fit_count_ << '\n';
  return out.str();
}

}  // namespace foothold
