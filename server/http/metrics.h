#pragma once
// Prometheus counters and histograms of the daemon, rendered in the text exposition
// format 0.0.4. Thread-safe: I/O threads count requests, workers observe fit durations.

#include <array>
#include <map>
#include <mutex>
#include <string>
#include <utility>

#include "server/jobs/job_record.h"

namespace foothold {

struct MetricsSnapshotInputs {
  std::map<JobState, int> jobs_by_state;
  int busy_workers = 0;
  int num_workers = 0;
  int open_connections = 0;
};

class Metrics {
 public:
  // Upper bounds of the fit duration buckets, seconds.
  static constexpr std::array<double, 10> kFitBuckets = {0.01, 0.05, 0.1, 0.25, 0.5,
                                                         1,    2.5,  5,   10,   30};

  void CountRequest(const std::string& method, const std::string& route, int status);
  void ObserveFit(const std::string& state, double seconds);
  std::string Render(const MetricsSnapshotInputs& inputs) const;

 private:
  mutable std::mutex mutex_;
  std::map<std::pair<std::string, std::string>, std::map<int, long long>> requests_;
  std::map<std::string, long long> jobs_finished_;
  std::array<long long, kFitBuckets.size()> fit_buckets_{};
  long long fit_count_ = 0;
  double fit_sum_seconds_ = 0;
};

}  // namespace foothold
