#include "server/jobs/job_record.h"

#include <chrono>

namespace foothold {

const char* ToString(JobState state) {
  switch (state) {
    case JobState::kQueued:
      return "queued";
    case JobState::kRunning:
      return "running";
    case JobState::kDone:
      return "done";
    case JobState::kFailed:
      return "failed";
    case JobState::kCancelled:
      return "cancelled";
  }
  return "queued";
}

bool JobStateFromString(const std::string& text, JobState* state) {
  for (JobState candidate : kAllJobStates) {
    if (text == ToString(candidate)) {
      *state = candidate;
      return true;
    }
  }
  return false;
}

std::int64_t NowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

}  // namespace foothold
