// ProgressThrottle against a real SQLite store: the first report and the last are written
// at once, the ones between wait for the interval, and Flush leaves the true count of a
// search that stopped early.
#include "server/jobs/progress_throttle.h"

#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <memory>
#include <string>
#include <thread>

#include "server/jobs/sqlite_job_store.h"

namespace foothold {
namespace {

constexpr std::chrono::hours kNeverDue{1};

struct RunningJob {
  std::unique_ptr<SqliteJobStore> store;
  std::string id;

  explicit RunningJob(const std::string& name) {
    const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/progress_" + name + ".db";
    for (const char* suffix : {"", "-wal", "-shm"}) std::remove((path + suffix).c_str());
    std::string error;
    store = SqliteJobStore::Open(path, &error);
    REQUIRE(store);
    std::vector<std::string> ids;
    bool is_full = false;
    REQUIRE(store->InsertJobs(false, {NewJob{"p", "{}"}}, 10, nullptr, &ids, &is_full, &error));
    JobRecord job;
    bool found = false;
    REQUIRE(store->ClaimNextJob("worker-0", &job, &found, &error));
    REQUIRE(found);
    id = job.id;
  }

  JobProgress Stored() {
    JobRecord job;
    bool found = false;
    std::string error;
    REQUIRE(store->GetJob(id, &job, &found, &error));
    REQUIRE(found);
    return job.progress;
  }
};

}  // namespace

TEST_CASE("ProgressThrottle: first and last reports are written, the ones between wait",
          "[server]") {
  RunningJob job("first_last");
  ProgressThrottle throttle(job.store.get(), job.id, kNeverDue);
  throttle.Report(0, 40, std::nan(""));
  CHECK(job.Stored().starts_finished == 0);
  CHECK(job.Stored().starts_planned == 40);
  for (int finished = 1; finished < 40; ++finished) throttle.Report(finished, 40, 2.0);
  CHECK(throttle.NumWrites() == 1);
  CHECK(job.Stored().starts_finished == 0);
  throttle.Report(40, 40, 1.5);
  CHECK(throttle.NumWrites() == 2);
  CHECK(job.Stored().starts_finished == 40);
  CHECK(job.Stored().best_rss == 1.5);
  throttle.Flush();
  CHECK(throttle.NumWrites() == 2);
}

TEST_CASE("ProgressThrottle: Flush writes the count of a search that stopped early", "[server]") {
  RunningJob job("flush");
  ProgressThrottle throttle(job.store.get(), job.id, kNeverDue);
  for (int finished = 1; finished <= 17; ++finished) throttle.Report(finished, 64, 3.0 / finished);
  CHECK(job.Stored().starts_finished == 1);
  throttle.Flush();
  CHECK(job.Stored().starts_finished == 17);
  CHECK(job.Stored().starts_planned == 64);
  CHECK(job.Stored().best_rss == Approx(3.0 / 17));
}

TEST_CASE("ProgressThrottle: a report after the interval is written", "[server]") {
  RunningJob job("interval");
  const auto interval = std::chrono::milliseconds(20);
  ProgressThrottle throttle(job.store.get(), job.id, interval);
  throttle.Report(1, 8, 1.0);
  throttle.Report(2, 8, 1.0);
  CHECK(job.Stored().starts_finished == 1);
  std::this_thread::sleep_for(interval * 2);
  throttle.Report(3, 8, 1.0);
  CHECK(job.Stored().starts_finished == 3);
  CHECK(throttle.NumWrites() == 2);
}

}  // namespace foothold
