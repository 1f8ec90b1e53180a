// Multistart driver control: failed starts, cancellation, deadline, progress.
#include <atomic>
#include <catch2/catch.hpp>
#include <chrono>
#include <thread>

#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;
using Clock = std::chrono::steady_clock;

// A cancelled or timed-out run returns within this many seconds: one local iteration per
// worker on the slow problem below takes milliseconds.
constexpr double kPromptSeconds = 1.0;
constexpr double kFitTolerance = 1e-6;

double SecondsSince(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

// A sine on 20000 points: each start costs milliseconds, so a large budget runs for long.
struct SlowSine {
  testing::PointwiseModel model = testing::SineModel();
  Problem problem;
  SearchBox box;
  SlowSine() {
    problem = MakeProblem(
        model, [](double x) { return 2.0 * std::sin(6.283185307179586 * 1.3 * x); }, 20000, 0.0,
        2e-4, 0.05);
    box.lower = Vec({-5.0, 0.05});
    box.upper = Vec({5.0, 6.0});
  }
};

MultistartOptions LongRun() {
  MultistartOptions options;
  options.max_starts = 5000;
  options.use_stopping_rule = false;
  options.num_threads = 2;
  return options;
}

TEST_CASE("Multistart: starts where the model is not finite are recorded and skipped", "[engine]") {
  const testing::PointwiseModel model = testing::PartlyUndefinedLineModel();
  const Problem problem = MakeProblem(
      model, [](double x) { return 1.0 + 2.0 * x; }, 30, 0.0, 0.1, 0.01);
  SearchBox box;
  box.lower = Vec({0.0, -5.0});
  box.upper = Vec({10.0, 5.0});
  MultistartOptions options;
  options.max_starts = 32;
  options.use_stopping_rule = false;
  const MultistartSummary summary =
      RunMultistart(problem, {{"user", Vec({7.0, 1.0})}}, box, options);
  INFO(summary.FullReport());
  REQUIRE(summary.stop == MultistartStop::kBudget);
  REQUIRE(summary.num_starts_run == 32);
  const StartRecord& user = summary.starts[0];
  CHECK(user.origin == "user");
  CHECK(user.termination == Termination::kNonFiniteModel);
  CHECK_FALSE(user.converged);
  CHECK(user.basin == -1);
  CHECK(summary.num_non_finite > 1);
  CHECK(summary.num_converged + summary.num_non_finite <= summary.num_starts_run);
  REQUIRE(!summary.basins.empty());
  CHECK(std::abs(summary.basins[0].parameters[0] - 1.0) < 0.05);
  CHECK(std::abs(summary.basins[0].parameters[1] - 2.0) < 0.05);
  CHECK(summary.BestStart() != nullptr);
  CHECK(summary.BestStart()->converged);
}

TEST_CASE("Multistart: a model that is never finite gives a log and no basin", "[engine]") {
  const testing::PointwiseModel model(
      {"a"}, [](double, const double*) { return std::nan(""); },
      [](double, const double*, double* g) { g[0] = 1; });
  const Problem problem = MakeProblem(
      model, [](double x) { return x; }, 10, 0.0, 1.0, 0.0);
  MultistartOptions options;
  options.max_starts = 10;
  const MultistartSummary summary = RunMultistart(problem, {{"user", Vec({1.0})}}, {}, options);
  CHECK(summary.num_starts_run == 10);
  CHECK(summary.num_non_finite == 10);
  CHECK(summary.basins.empty());
  CHECK(summary.best_start_index == -1);
  CHECK(summary.BestStart() == nullptr);
  CHECK_FALSE(summary.ambiguous_basins);
}

TEST_CASE("Multistart: a cancel flag set from another thread stops promptly", "[engine]") {
  const SlowSine slow;
  std::atomic<bool> cancel{false};
  MultistartOptions options = LongRun();
  options.cancel_flag = &cancel;
  Clock::time_point cancelled_at;
  std::thread canceller([&] {
    std::this_thread::sleep_for(std::chrono::milliseconds(200));
    cancelled_at = Clock::now();
    cancel = true;
  });
  const MultistartSummary summary =
      RunMultistart(slow.problem, {{"user", Vec({1.0, 1.0})}}, slow.box, options);
  const Clock::time_point returned = Clock::now();
  canceller.join();
  INFO(summary.BriefReport());
  CHECK(summary.stop == MultistartStop::kCancelled);
  CHECK(summary.num_starts_run < summary.num_starts_planned);
  CHECK(summary.BriefReport().find("multistart cancelled: ") == 0);
  CHECK(summary.FullReport().find("stop                cancelled (cancelled by the caller") !=
        std::string::npos);
  CHECK(std::chrono::duration<double>(returned - cancelled_at).count() < kPromptSeconds);
  for (const StartRecord& record : summary.starts) {
    if (record.termination == Termination::kCancelled) CHECK(record.basin == -1);
  }
}

TEST_CASE("Multistart: an is_cancelled callback stops the run between starts", "[engine]") {
  const SlowSine slow;
  std::atomic<int> finished{0};
  MultistartOptions options = LongRun();
  options.progress = [&](int num_finished, int, double) { finished = num_finished; };
  options.is_cancelled = [&] { return finished.load() >= 5; };
  const MultistartSummary summary =
      RunMultistart(slow.problem, {{"user", Vec({1.0, 1.0})}}, slow.box, options);
  CHECK(summary.stop == MultistartStop::kCancelled);
  CHECK(summary.num_starts_run >= 5);
  CHECK(summary.num_starts_run <= 5 + options.num_threads);
}

TEST_CASE("Multistart: the deadline ends the run", "[engine]") {
  const SlowSine slow;
  MultistartOptions options = LongRun();
  options.deadline_seconds = 0.3;
  const Clock::time_point started = Clock::now();
  const MultistartSummary summary =
      RunMultistart(slow.problem, {{"user", Vec({1.0, 1.0})}}, slow.box, options);
  INFO(summary.BriefReport());
  CHECK(summary.stop == MultistartStop::kDeadline);
  CHECK(SecondsSince(started) < options.deadline_seconds + kPromptSeconds);
  CHECK(summary.num_starts_run < summary.num_starts_planned);
}

TEST_CASE("Multistart: progress reports every finished start and the best rss", "[engine]") {
  const testing::PointwiseModel model = testing::ExpDecayModel();
  const Problem problem = MakeProblem(
      model, [](double x) { return 3.0 * std::exp(-0.7 * x); }, 40, 0.0, 0.2, 0.01);
  int calls = 0, last_finished = 0, last_planned = 0;
  double last_best = 0;
  std::atomic<bool> local_callback_called{false};  // called from the workers concurrently
  MultistartOptions options;
  options.max_starts = 24;
  options.num_threads = 2;
  // With the rule on, a start of the round discarded at the stop may be reported too.
  options.use_stopping_rule = false;
  options.progress = [&](int num_finished, int num_planned, double best_rss) {
    ++calls;  // serialised by the driver
    last_finished = num_finished;
    last_planned = num_planned;
    last_best = best_rss;
  };
  options.local.callback = [&](int, double) {
    local_callback_called = true;
    return true;
  };
  const MultistartSummary summary =
      RunMultistart(problem, {{"user", Vec({2.0, 0.5})}}, {}, options);
  CHECK(calls == summary.num_starts_run);
  CHECK(last_finished == summary.num_starts_run);
  CHECK(last_planned == summary.num_starts_planned);
  REQUIRE(!summary.basins.empty());
  CHECK(last_best == summary.basins[0].rss);
  CHECK(local_callback_called);
  CHECK(std::abs(summary.basins[0].parameters[1] - 0.7) < 0.01);
  CHECK(summary.BestStart()->rss == Approx(summary.basins[0].rss).epsilon(kFitTolerance));
}

TEST_CASE("Multistart: progress under the stopping rule counts no more than a round extra",
          "[engine]") {
  const testing::PointwiseModel model = testing::ExpDecayModel();
  const Problem problem = MakeProblem(
      model, [](double x) { return 3.0 * std::exp(-0.7 * x); }, 40, 0.0, 0.2, 0.01);
  for (int threads : {1, 2}) {
    std::atomic<int> calls{0}, last_finished{0};
    MultistartOptions options;
    options.max_starts = 200;
    options.num_threads = threads;
    options.progress = [&](int num_finished, int, double) {
      ++calls;
      last_finished = num_finished;
    };
    const MultistartSummary summary =
        RunMultistart(problem, {{"user", Vec({2.0, 0.5})}}, {}, options);
    INFO(threads << " threads: " << summary.BriefReport());
    REQUIRE(summary.stop == MultistartStop::kStoppingRule);
    CHECK(last_finished == calls);
    // One thread never starts the round in flight before the rule is evaluated.
    if (threads == 1) CHECK(calls == summary.num_starts_run);
    CHECK(calls >= summary.num_starts_run);
    CHECK(calls <= summary.num_starts_run + options.round_size);
  }
}

}  // namespace
}  // namespace foothold
