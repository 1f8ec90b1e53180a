#pragma once
// A fit job as the store keeps it: identity, state, times, the request and result
// documents (JSON text, produced and read only by the codecs) and progress.

#include <cstdint>
#include <string>
#include <vector>

namespace foothold {

enum class JobState { kQueued, kRunning, kDone, kFailed, kCancelled };

// "queued" | "running" | "done" | "failed" | "cancelled", exactly as JSON carries them.
const char* ToString(JobState state);
bool JobStateFromString(const std::string& text, JobState* state);
constexpr JobState kAllJobStates[] = {JobState::kQueued, JobState::kRunning, JobState::kDone,
                                      JobState::kFailed, JobState::kCancelled};
inline bool IsFinished(JobState state) {
  return state == JobState::kDone || state == JobState::kFailed || state == JobState::kCancelled;
}

struct JobProgress {
  int starts_finished = 0;
  int starts_planned = 0;
  double best_rss = 0;  // NaN-free: meaningful only when starts_finished > 0
};

struct JobRecord {
  std::string id;
  std::string batch_id;  // empty for a single fit
  std::string label;
  JobState state = JobState::kQueued;
  std::int64_t created_ms = 0;   // Unix epoch milliseconds
  std::int64_t started_ms = 0;   // 0 until claimed
  std::int64_t finished_ms = 0;  // 0 until finished
  std::string request_json;
  std::string result_json;  // empty until done
  std::string error;        // why a job failed
  JobProgress progress;
  int attempts = 0;  // times a worker claimed it (more than 1 after a restart)
  bool cancel_requested = false;
};

// A job about to be committed.
struct NewJob {
  std::string label;
  std::string request_json;
};

struct BatchRecord {
  std::string id;
  std::int64_t created_ms = 0;
  std::vector<JobRecord> jobs;  // in submission order, without request and result text
};

// Filters and paging of a job listing; newest first.
struct JobFilter {
  bool has_state = false;
  JobState state = JobState::kQueued;
  std::string label;                  // exact match when not empty
  std::int64_t created_since_ms = 0;  // inclusive; 0 means no filter
  int limit = 50;
  std::int64_t cursor = 0;  // 0 = from the newest; else the sequence number to continue below
};

struct JobPage {
  std::vector<JobRecord> jobs;
  std::int64_t next_cursor = 0;  // 0 when this was the last page
};

// Unix epoch milliseconds now.
std::int64_t NowMs();

}  // namespace foothold
