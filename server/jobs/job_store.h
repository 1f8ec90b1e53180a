#pragma once
// The durable home of jobs. One interface so that a store shared by several nodes
// (claims with row locks and leases) can replace the single-file one: workers claim a job,
// report progress, and finish it; nothing is lost between a commit and a restart.

#include <map>
#include <string>
#include <vector>

#include "server/jobs/job_record.h"

namespace foothold {

class JobStore {
 public:
  virtual ~JobStore() = default;

  // Commits all jobs in one transaction (a batch when batch_id is not empty) and fills
  // their ids in order; as_batch also records a batch and returns its id. Refuses (returns false,
  // *queue_full true) when the queued count would exceed max_queued.
  virtual bool InsertJobs(bool as_batch, const std::vector<NewJob>& jobs, int max_queued,
                          std::string* batch_id, std::vector<std::string>* ids, bool* queue_full,
                          std::string* error) = 0;
  // Moves the oldest queued job to running for `worker`; *found false when none is queued.
  virtual bool ClaimNextJob(const std::string& worker, JobRecord* out, bool* found,
                            std::string* error) = 0;
  virtual bool UpdateProgress(const std::string& id, const JobProgress& progress,
                              std::string* error) = 0;
  // Finishes a running job (done, failed or cancelled); a job no longer running is left
  // as it is, so a result is written exactly once.
  virtual bool FinishJob(const std::string& id, JobState state, const std::string& result_json,
                         const std::string& job_error, std::string* error) = 0;
  // Puts a running job back in the queue (shutdown before it finished).
  virtual bool RequeueJob(const std::string& id, std::string* error) = 0;
  // Queued: cancelled at once. Running: cancel_requested set (the worker stops it).
  // *previous is the state before; *found false for an unknown id.
  virtual bool CancelJob(const std::string& id, JobState* previous, bool* found,
                         std::string* error) = 0;
  virtual bool GetJob(const std::string& id, JobRecord* out, bool* found, std::string* error) = 0;
  virtual bool ListJobs(const JobFilter& filter, JobPage* out, std::string* error) = 0;
  virtual bool GetBatch(const std::string& id, BatchRecord* out, bool* found,
                        std::string* error) = 0;
  // Startup recovery: every running job goes back to queued. *count how many.
  virtual bool RequeueAllRunning(int* count, std::string* error) = 0;
  // Deletes finished jobs finished before `before_ms`. *count how many.
  virtual bool PurgeFinishedBefore(std::int64_t before_ms, int* count, std::string* error) = 0;
  virtual bool CountByState(std::map<JobState, int>* counts, std::string* error) = 0;
  // A cheap query that proves the store answers.
  virtual bool IsReachable() = 0;
};

}  // namespace foothold
