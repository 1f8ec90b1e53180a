#include "server/jobs/worker_pool.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <sstream>

#include "server/fit_service.h"
#include "server/jobs/progress_throttle.h"
#include "server/json_codec.h"
#include "server/model_comparison.h"

namespace foothold {
namespace {

std::string BriefReport(const JobRecord& job, const FitOutcome& outcome) {
  std::ostringstream out;
  out << "job " << job.id;
  if (!job.label.empty()) out << " (" << job.label << ")";
  out << ": rss " << outcome.statistics.rss << ", " << outcome.basins.size() << " basin(s), "
      << outcome.starts.size() << " start(s), " << ToString(outcome.best.termination) << "; "
      << outcome.verdict.summary;
  return out.str();
}

// The comparison's part of the brief report: the winner, its weight and its margin.
std::string ComparisonReport(const ModelComparison& comparison) {
  std::ostringstream out;
  out.precision(3);
  out << "Compared " << comparison.ranking.size() << " families: ";
  if (comparison.winner.empty()) {
    out << "no winner, no family gave a finite AICc.";
    return out.str();
  }
  out << "winner " << comparison.winner << " (Akaike weight "
      << comparison.ranking.front().akaike_weight;
  if (std::isfinite(comparison.winner_margin)) {
    out << ", AICc " << comparison.winner_margin << " below " << comparison.ranking[1].family;
  }
  out << ").";
  return out.str();
}

// The request's result document and brief report: one fit, or with "compare" a comparison
// of families whose result is the winner's document with the ranking beside it.
bool RunRequest(const JobRecord& job, const FitRequest& request, const FitHooks& hooks,
                std::string* result_json, std::string* brief, std::string* error) {
  if (request.compare.empty()) {
    FitOutcome outcome;
    if (!RunFit(request, hooks, &outcome, error)) return false;
    *result_json = EncodeFitOutcome(outcome).dump();
    *brief = BriefReport(job, outcome);
    return true;
  }
  std::vector<CandidateFit> fits;
  ModelComparison comparison;
  if (!RunComparison(request, hooks, &fits, &comparison, error)) return false;
  *result_json = EncodeComparisonResult(fits, comparison).dump();
  const size_t best = comparison.ranking.empty() ? 0 : comparison.ranking.front().index;
  *brief = BriefReport(job, fits[best].outcome) + " " + ComparisonReport(comparison);
  return true;
}

}  // namespace

WorkerPool::WorkerPool(JobStore* store, const WorkerPoolOptions& options,
                       JobFinishedCallback on_finished)
    : store_(store), options_(options), on_finished_(std::move(on_finished)) {}

WorkerPool::~WorkerPool() { Shutdown(0); }

void WorkerPool::Start() {
  is_running_ = true;
  for (int i = 0; i < options_.num_workers; ++i) {
    threads_.emplace_back([this, i] { WorkLoop(i); });
  }
}

void WorkerPool::Notify() { wake_.notify_one(); }

void WorkerPool::Cancel(const std::string& id) {
  std::lock_guard<std::mutex> lock(mutex_);
  cancelled_.insert(id);
}

void WorkerPool::Shutdown(double grace_seconds) {
  if (threads_.empty()) return;
  stop_claiming_ = true;
  wake_.notify_all();
  {
    std::unique_lock<std::mutex> lock(mutex_);
    idle_.wait_for(lock, std::chrono::duration<double>(std::max(0.0, grace_seconds)),
                   [this] { return num_busy_.load() == 0; });
  }
  stop_running_ = true;
  for (std::thread& thread : threads_) thread.join();
  threads_.clear();
  is_running_ = false;
}

void WorkerPool::WorkLoop(int worker_index) {
  const std::string worker = "worker-" + std::to_string(worker_index);
  while (!stop_claiming_) {
    JobRecord job;
    bool found = false;
    std::string error;
    num_busy_++;
    const bool claimed = !stop_claiming_ && store_->ClaimNextJob(worker, &job, &found, &error);
    if (claimed && found) {
      RunJob(job);
    }
    num_busy_--;
    idle_.notify_all();
    if (claimed && found) continue;
    std::unique_lock<std::mutex> lock(mutex_);
    wake_.wait_for(lock, std::chrono::milliseconds(options_.idle_poll_ms));
  }
}

void WorkerPool::RunJob(const JobRecord& job) {
  const auto started = std::chrono::steady_clock::now();
  auto seconds = [&] {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  };
  std::string error;
  FitRequest request;
  if (!DecodeFitRequestText(job.request_json, &request, &error)) {
    store_->FinishJob(job.id, JobState::kFailed, "", error, &error);
    JobRecord failed = job;
    failed.state = JobState::kFailed;
    on_finished_(failed, seconds(), "job " + job.id + " failed: " + failed.error);
    return;
  }
  request.deadline_seconds = std::min(request.deadline_seconds, options_.job_deadline_cap_seconds);
  std::atomic<bool> is_cancelled{job.cancel_requested};
  FitHooks hooks;
  hooks.should_stop = [this, &job, &is_cancelled] {
    if (stop_running_) return true;
    if (is_cancelled) return true;
    std::lock_guard<std::mutex> lock(mutex_);
    if (cancelled_.count(job.id)) is_cancelled = true;
    return is_cancelled.load();
  };
  auto progress =
      std::make_shared<ProgressThrottle>(store_, job.id, ProgressThrottle::kDefaultInterval);
  hooks.on_progress = [progress](int finished, int planned, double best_rss) {
    progress->Report(finished, planned, best_rss);
  };
  JobRecord finished = job;
  std::string brief;
  std::string fit_error;
  std::string result_json;
  std::string result_brief;
  const bool ran = RunRequest(job, request, hooks, &result_json, &result_brief, &fit_error);
  hooks.should_stop();
  progress->Flush();
  {
    std::lock_guard<std::mutex> lock(mutex_);
    cancelled_.erase(job.id);
  }
  if (stop_running_ && !is_cancelled) {
    // Shutdown before the fit ended: the job runs again after the restart.
    store_->RequeueJob(job.id, &error);
    return;
  }
  if (!ran) {
    finished.state = JobState::kFailed;
    finished.error = fit_error;
    brief = "job " + job.id + " failed: " + fit_error;
    store_->FinishJob(job.id, JobState::kFailed, "", fit_error, &error);
  } else {
    finished.state = is_cancelled ? JobState::kCancelled : JobState::kDone;
    finished.result_json = std::move(result_json);
    brief = std::move(result_brief);
    if (is_cancelled) brief += " (cancelled)";
    store_->FinishJob(job.id, finished.state, finished.result_json, "", &error);
  }
  on_finished_(finished, seconds(), brief);
}

}  // namespace foothold
