#pragma once
// The fit workers: threads that claim queued jobs from the store, run them through the
// fit service and write the result back. The I/O threads never fit; they only commit jobs
// and wake a worker.

#include <atomic>
#include <condition_variable>
#include <functional>
#include <limits>
#include <mutex>
#include <set>
#include <string>
#include <thread>
#include <vector>

#include "server/jobs/job_store.h"

namespace foothold {

struct WorkerPoolOptions {
  // Fit worker threads. Default 1. Must be >= 1.
  int num_workers = 1;
  // Each job's deadline is cut to this many seconds (its own, when smaller, stays).
  // Default 300.
  double job_deadline_cap_seconds = 300;
  // How long an idle worker sleeps before looking at the store again (a new job wakes it
  // at once). Default 500 ms.
  int idle_poll_ms = 500;
};

// What a worker reports when a job ends: the record as finished, the fit's wall time and
// a brief one-line report.
using JobFinishedCallback =
    std::function<void(const JobRecord& job, double seconds, const std::string& brief)>;

class WorkerPool {
 public:
  WorkerPool(JobStore* store, const WorkerPoolOptions& options, JobFinishedCallback on_finished);
  ~WorkerPool();

  void Start();
  // A job was committed: wake an idle worker.
  void Notify();
  // Stops the job if a worker here runs it (at its next solver iteration).
  void Cancel(const std::string& id);
  // Stops claiming; waits up to grace_seconds for running jobs; stops the rest and puts
  // them back in the queue; joins the threads.
  void Shutdown(double grace_seconds);

  int NumBusy() const { return num_busy_.load(); }
  int NumWorkers() const { return options_.num_workers; }
  bool IsRunning() const { return is_running_.load(); }

 private:
  void WorkLoop(int worker_index);
  void RunJob(const JobRecord& job);

  JobStore* store_;
  WorkerPoolOptions options_;
  JobFinishedCallback on_finished_;
  std::vector<std::thread> threads_;
  std::mutex mutex_;
  std::condition_variable wake_;
  std::condition_variable idle_;
  std::set<std::string> cancelled_;
  std::atomic<bool> is_running_{false};
  std::atomic<bool> stop_claiming_{false};
  std::atomic<bool> stop_running_{false};
  std::atomic<int> num_busy_{0};
};

}  // namespace foothold
