#include "server/jobs/progress_throttle.h"

#include <cmath>

namespace foothold {

ProgressThrottle::ProgressThrottle(JobStore* store, std::string job_id, Clock::duration interval)
    : store_(store), job_id_(std::move(job_id)), interval_(interval) {}

void ProgressThrottle::Report(int starts_finished, int starts_planned, double best_rss) {
  std::lock_guard<std::mutex> lock(mutex_);
  // The store keeps a number; before the first converged start there is no best yet.
  pending_ = JobProgress{starts_finished, starts_planned, std::isfinite(best_rss) ? best_rss : 0.0};
  has_pending_ = true;
  const bool is_last = starts_finished >= starts_planned;
  if (!has_written_ || is_last || Clock::now() - last_write_ >= interval_) WriteLocked();
}

void ProgressThrottle::Flush() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (has_pending_) WriteLocked();
}

int ProgressThrottle::NumWrites() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return num_writes_;
}

void ProgressThrottle::WriteLocked() {
  // A failed progress write loses nothing durable: the next one, or the result, follows.
  std::string ignored;
  store_->UpdateProgress(job_id_, pending_, &ignored);
  has_pending_ = false;
  has_written_ = true;
  last_write_ = Clock::now();
  ++num_writes_;
}

}  // namespace foothold
