#pragma once
// The job store in one SQLite file, WAL mode with synchronous=FULL: a transaction is on
// disk when its commit returns, so a job acknowledged with 202 survives kill -9 and a power
// cut. One connection serialised by a mutex; the daemon's write rate is a few per job.

#include <memory>
#include <mutex>
#include <string>

#include "server/jobs/job_store.h"

struct sqlite3;

namespace foothold {

class SqliteJobStore : public JobStore {
 public:
  // Opens (creating when missing) the file and its schema; nullptr with a message on failure.
  static std::unique_ptr<SqliteJobStore> Open(const std::string& path, std::string* error);
  ~SqliteJobStore() override;

  bool InsertJobs(bool as_batch, const std::vector<NewJob>& jobs, int max_queued,
                  std::string* batch_id, std::vector<std::string>* ids, bool* queue_full,
                  std::string* error) override;
  bool ClaimNextJob(const std::string& worker, JobRecord* out, bool* found,
                    std::string* error) override;
  bool UpdateProgress(const std::string& id, const JobProgress& progress,
                      std::string* error) override;
  bool FinishJob(const std::string& id, JobState state, const std::string& result_json,
                 const std::string& job_error, std::string* error) override;
  bool RequeueJob(const std::string& id, std::string* error) override;
  bool CancelJob(const std::string& id, JobState* previous, bool* found,
                 std::string* error) override;
  bool GetJob(const std::string& id, JobRecord* out, bool* found, std::string* error) override;
  bool ListJobs(const JobFilter& filter, JobPage* out, std::string* error) override;
  bool GetBatch(const std::string& id, BatchRecord* out, bool* found, std::string* error) override;
  bool RequeueAllRunning(int* count, std::string* error) override;
  bool PurgeFinishedBefore(std::int64_t before_ms, int* count, std::string* error) override;
  bool CountByState(std::map<JobState, int>* counts, std::string* error) override;
  bool IsReachable() override;

 private:
  explicit SqliteJobStore(sqlite3* db) : db_(db) {}
  bool Exec(const std::string& sql, std::string* error);
  std::string NewId(const char* prefix);

  sqlite3* db_;
  std::mutex mutex_;
  std::uint64_t id_state_ = 0;
};

}  // namespace foothold
