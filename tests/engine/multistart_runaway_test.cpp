// Runaway starts: a start the iteration limit stopped below the best basin is reported
// (MultistartSummary::num_runaway_starts and the fields after it), so the best basin is
// never presented as the lowest cost seen when it is not. Here the limit is set to two
// iterations so that the sine's global optimum is seen only by an unfinished start; the
// real cases are ridges to infinity (tests/server/verdict_test.cpp, logistic5 on data of
// its limit curve, and the adversarial corpus).
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/multistart/multistart.h"
#include "engine/solve/levenberg_marquardt.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::Vec;

// The sine case's poor optimum reached from its far seed {1, 0.4}, converged.
Eigen::VectorXd PoorOptimum(const Problem& problem) {
  const LocalFitSummary fit = MinimizeLevenbergMarquardt(problem, Vec({1, 0.4}), {});
  REQUIRE(fit.IsConverged());
  return fit.parameters;
}

MultistartOptions CandidatesOnly(int max_iterations, bool resume = false) {
  MultistartOptions options;
  options.max_starts = 2;
  options.num_threads = 2;
  options.local.max_iterations = max_iterations;
  options.resume_runaway_start = resume;
  return options;
}

TEST_CASE("Multistart: a start cut off below the best basin is a runaway start", "[engine]") {
  const testing::SearchCase sine = testing::ManyBasinSineCase();
  const Eigen::VectorXd poor = PoorOptimum(sine.problem);
  const std::vector<StartCandidate> candidates = {{"guess:poor", poor},
                                                  {"guess:near", Vec({2.05, 1.31})}};
  const MultistartSummary summary =
      RunMultistart(sine.problem, candidates, sine.box, CandidatesOnly(2));
  REQUIRE(summary.starts.size() == 2);
  const StartRecord& settled = summary.starts[0];
  const StartRecord& unfinished = summary.starts[1];
  REQUIRE(settled.converged);
  REQUIRE(unfinished.termination == Termination::kIterationLimit);
  REQUIRE(unfinished.rss < settled.rss);
  REQUIRE(summary.basins.size() == 1);

  CHECK(summary.num_runaway_starts == 1);
  CHECK(summary.runaway_rss == unfinished.rss);
  CHECK(summary.runaway_start_index == 1);
  CHECK(summary.runaway_beyond_box.empty());  // it stopped near the truth, inside the box
  CHECK(summary.BriefReport().find("1 runaway starts") != std::string::npos);
}

TEST_CASE("Multistart: the lowest runaway start is resumed and settles where it was heading",
          "[engine]") {
  const testing::SearchCase sine = testing::ManyBasinSineCase();
  const Eigen::VectorXd poor = PoorOptimum(sine.problem);
  const std::vector<StartCandidate> candidates = {{"guess:poor", poor},
                                                  {"guess:near", Vec({2.05, 1.31})}};
  // Four iterations cut the near start off; four more from where it stopped finish it.
  const MultistartSummary summary =
      RunMultistart(sine.problem, candidates, sine.box, CandidatesOnly(4, true));
  INFO(summary.FullReport());
  REQUIRE(summary.starts.size() == 3);
  const StartRecord& unfinished = summary.starts[1];
  const StartRecord& resumed = summary.starts[2];
  REQUIRE(unfinished.termination == Termination::kIterationLimit);
  CHECK(resumed.index == 2);
  CHECK(resumed.origin == "resume");
  CHECK(resumed.start == unfinished.end);
  CHECK(resumed.initial_rss == unfinished.rss);
  CHECK(resumed.converged);
  CHECK(summary.num_starts_planned == 3);
  REQUIRE(summary.basins.size() == 2);
  CHECK(summary.basins.front().representative_start == 2);
  CHECK(summary.num_runaway_starts == 0);  // the resumed basin is below the cut-off start
}

TEST_CASE("Multistart: no runaway start when the unfinished start is above the best basin",
          "[engine]") {
  const testing::SearchCase sine = testing::ManyBasinSineCase();
  const Eigen::VectorXd poor = PoorOptimum(sine.problem);
  SECTION("given the iterations, the near start settles and becomes the best basin") {
    const std::vector<StartCandidate> candidates = {{"guess:poor", poor},
                                                    {"guess:near", Vec({2.05, 1.31})}};
    const MultistartSummary summary =
        RunMultistart(sine.problem, candidates, sine.box, CandidatesOnly(1000));
    REQUIRE(summary.starts[1].converged);
    CHECK(summary.basins.size() == 2);
    CHECK(summary.num_runaway_starts == 0);
    CHECK(std::isnan(summary.runaway_rss));
    CHECK(summary.runaway_start_index == -1);
  }
  SECTION("an unfinished start above the best basin is only unconverged") {
    const LocalFitSummary truth = MinimizeLevenbergMarquardt(sine.problem, Vec({2.05, 1.31}), {});
    REQUIRE(truth.IsConverged());
    const std::vector<StartCandidate> candidates = {{"guess:truth", truth.parameters},
                                                    {"guess:far", Vec({1.2, 0.45})}};
    const MultistartSummary summary =
        RunMultistart(sine.problem, candidates, sine.box, CandidatesOnly(2));
    REQUIRE(summary.starts[0].converged);
    REQUIRE(summary.starts[1].termination == Termination::kIterationLimit);
    CHECK(summary.num_runaway_starts == 0);
    CHECK(std::isnan(summary.runaway_rss));
  }
}

}  // namespace
}  // namespace foothold
