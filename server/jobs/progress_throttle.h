#pragma once
// A running job's progress, written to the store at most once per interval. Every finished
// start reports, but each write is a synchronous SQLite transaction (and the multistart
// driver calls back under its lock), so a fast fit would spend more time committing
// progress than fitting. The first report and a report of all starts finished are always
// written; Flush() writes the last report held back, so a fit that stops early (its
// search rule, a deadline) still leaves its true count before the job is finished.

#include <chrono>
#include <mutex>
#include <string>

#include "server/jobs/job_store.h"

namespace foothold {

class ProgressThrottle {
 public:
  using Clock = std::chrono::steady_clock;
  // Ten writes a second per job: GET shows progress a person sees move, at a cost a
  // synchronous store bears.
  static constexpr std::chrono::milliseconds kDefaultInterval{100};

  ProgressThrottle(JobStore* store, std::string job_id, Clock::duration interval);

  // Thread-safe; writes now or holds the report back until the interval has passed.
  void Report(int starts_finished, int starts_planned, double best_rss);
  // Writes the held-back report, if any.
  void Flush();

  int NumWrites() const;

 private:
  void WriteLocked();

  JobStore* store_;
  std::string job_id_;
  Clock::duration interval_;
  mutable std::mutex mutex_;
  JobProgress pending_;
  bool has_pending_ = false;
  bool has_written_ = false;
  Clock::time_point last_write_;
  int num_writes_ = 0;
};

}  // namespace foothold
