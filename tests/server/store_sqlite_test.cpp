// The SQLite job store on a real file: commits, claims, exactly-once finishing, recovery,
// cancellation, listing and purging.
#include <catch2/catch.hpp>
#include <cstdio>
#include <string>

#include "server/jobs/sqlite_job_store.h"

namespace foothold {
namespace {

std::string TempStorePath(const std::string& name) {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/store_test_" + name + ".db";
  std::remove(path.c_str());
  std::remove((path + "-wal").c_str());
  std::remove((path + "-shm").c_str());
  return path;
}

std::vector<std::string> Insert(JobStore& store, int count, bool as_batch = false,
                                std::string* batch_id = nullptr) {
  std::vector<NewJob> jobs;
  for (int i = 0; i < count; ++i) jobs.push_back({"label-" + std::to_string(i % 2), "{}"});
  std::vector<std::string> ids;
  bool full = false;
  std::string error;
  REQUIRE(store.InsertJobs(as_batch, jobs, 1000, batch_id, &ids, &full, &error));
  REQUIRE_FALSE(full);
  return ids;
}

}  // namespace

TEST_CASE("SqliteJobStore: committed jobs survive reopening and running ones are requeued",
          "[server]") {
  const std::string path = TempStorePath("reopen");
  std::string error;
  std::vector<std::string> ids;
  {
    auto store = SqliteJobStore::Open(path, &error);
    REQUIRE(store);
    ids = Insert(*store, 3);
    JobRecord claimed;
    bool found = false;
    REQUIRE(store->ClaimNextJob("w0", &claimed, &found, &error));
    REQUIRE(found);
    CHECK(claimed.id == ids[0]);
    CHECK(claimed.state == JobState::kRunning);
    CHECK(claimed.attempts == 1);
  }
  auto store = SqliteJobStore::Open(path, &error);
  REQUIRE(store);
  int requeued = 0;
  REQUIRE(store->RequeueAllRunning(&requeued, &error));
  CHECK(requeued == 1);
  JobRecord job;
  bool found = false;
  REQUIRE(store->GetJob(ids[0], &job, &found, &error));
  REQUIRE(found);
  CHECK(job.state == JobState::kQueued);
  CHECK(job.attempts == 1);
}

TEST_CASE("SqliteJobStore: a result is written once and a finished job is not finished again",
          "[server]") {
  std::string error;
  auto store = SqliteJobStore::Open(TempStorePath("once"), &error);
  REQUIRE(store);
  const std::vector<std::string> ids = Insert(*store, 1);
  JobRecord claimed;
  bool found = false;
  REQUIRE(store->ClaimNextJob("w0", &claimed, &found, &error));
  REQUIRE(store->FinishJob(ids[0], JobState::kDone, "{\"a\":1}", "", &error));
  REQUIRE(store->FinishJob(ids[0], JobState::kFailed, "", "late", &error));
  JobRecord job;
  REQUIRE(store->GetJob(ids[0], &job, &found, &error));
  CHECK(job.state == JobState::kDone);
  CHECK(job.result_json == "{\"a\":1}");
  REQUIRE(store->ClaimNextJob("w0", &claimed, &found, &error));
  CHECK_FALSE(found);
}

TEST_CASE("SqliteJobStore: the queue limit refuses a whole batch and commits nothing", "[server]") {
  std::string error;
  auto store = SqliteJobStore::Open(TempStorePath("full"), &error);
  REQUIRE(store);
  std::vector<NewJob> jobs(3, NewJob{"", "{}"});
  std::vector<std::string> ids;
  bool full = false;
  std::string batch_id;
  CHECK_FALSE(store->InsertJobs(true, jobs, 2, &batch_id, &ids, &full, &error));
  CHECK(full);
  std::map<JobState, int> counts;
  REQUIRE(store->CountByState(&counts, &error));
  CHECK(counts[JobState::kQueued] == 0);
}

TEST_CASE("SqliteJobStore: cancel, list newest first with a cursor, batches and purging",
          "[server]") {
  std::string error;
  auto store = SqliteJobStore::Open(TempStorePath("list"), &error);
  REQUIRE(store);
  std::string batch_id;
  const std::vector<std::string> ids = Insert(*store, 5, true, &batch_id);
  REQUIRE_FALSE(batch_id.empty());
  JobState previous;
  bool found = false;
  REQUIRE(store->CancelJob(ids[4], &previous, &found, &error));
  CHECK(found);
  CHECK(previous == JobState::kQueued);
  REQUIRE(store->CancelJob("nope", &previous, &found, &error));
  CHECK_FALSE(found);

  JobFilter filter;
  filter.limit = 2;
  JobPage page;
  REQUIRE(store->ListJobs(filter, &page, &error));
  REQUIRE(page.jobs.size() == 2);
  CHECK(page.jobs[0].id == ids[4]);
  CHECK(page.jobs[1].id == ids[3]);
  filter.cursor = page.next_cursor;
  REQUIRE(store->ListJobs(filter, &page, &error));
  REQUIRE(page.jobs.size() == 2);
  CHECK(page.jobs[0].id == ids[2]);
  filter = JobFilter();
  filter.has_state = true;
  filter.state = JobState::kCancelled;
  REQUIRE(store->ListJobs(filter, &page, &error));
  REQUIRE(page.jobs.size() == 1);
  CHECK(page.next_cursor == 0);

  BatchRecord batch;
  REQUIRE(store->GetBatch(batch_id, &batch, &found, &error));
  REQUIRE(found);
  CHECK(batch.jobs.size() == 5);

  int purged = 0;
  REQUIRE(store->PurgeFinishedBefore(NowMs() + 1000, &purged, &error));
  CHECK(purged == 1);
  CHECK(store->IsReachable());
}

}  // namespace foothold
