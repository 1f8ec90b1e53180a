// Multistart driver: determinism across thread counts, failed starts, cancellation,
// deadline, budget defaults and input validation.
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

constexpr double kTruthAmplitude = 2.0;
constexpr double kTruthFrequency = 1.3;
constexpr double kTwoPi = 6.283185307179586;

// Equal values, or both NaN (a failed start's rss, an unidentifiable standard error).
bool SameDouble(double u, double v) { return (std::isnan(u) && std::isnan(v)) || u == v; }

// Every field of the summaries but the timings (and the thread count, which is the point).
void RequireSameSummary(const MultistartSummary& a, const MultistartSummary& b) {
  REQUIRE(a.stop == b.stop);
  REQUIRE(a.num_starts_planned == b.num_starts_planned);
  REQUIRE(a.num_starts_run == b.num_starts_run);
  REQUIRE(a.num_converged == b.num_converged);
  REQUIRE(a.num_non_finite == b.num_non_finite);
  REQUIRE(a.num_rounds == b.num_rounds);
  REQUIRE(a.best_start_index == b.best_start_index);
  REQUIRE(a.ambiguous_basins == b.ambiguous_basins);
  REQUIRE(a.best_basin_single_start == b.best_basin_single_start);
  REQUIRE(a.rule_num_searches == b.rule_num_searches);
  REQUIRE(a.rule_num_basins == b.rule_num_basins);
  REQUIRE(SameDouble(a.expected_unseen_basins, b.expected_unseen_basins));
  REQUIRE(SameDouble(a.best_gap_chi2, b.best_gap_chi2));
  REQUIRE(a.message == b.message);
  REQUIRE(a.starts.size() == b.starts.size());
  for (size_t i = 0; i < a.starts.size(); ++i) {
    const StartRecord& x = a.starts[i];
    const StartRecord& y = b.starts[i];
    INFO("start " << x.index);
    REQUIRE(x.index == y.index);
    REQUIRE(x.origin == y.origin);
    REQUIRE(x.start == y.start);
    REQUIRE(x.end == y.end);
    REQUIRE(SameDouble(x.rss, y.rss));
    REQUIRE(SameDouble(x.initial_rss, y.initial_rss));
    REQUIRE(x.message == y.message);
    REQUIRE(x.termination == y.termination);
    REQUIRE(x.num_iterations == y.num_iterations);
    REQUIRE(x.num_evaluations == y.num_evaluations);
    REQUIRE(x.converged == y.converged);
    REQUIRE(x.basin == y.basin);
  }
  REQUIRE(a.basins.size() == b.basins.size());
  for (size_t i = 0; i < a.basins.size(); ++i) {
    REQUIRE(a.basins[i].rss == b.basins[i].rss);
    REQUIRE(a.basins[i].num_starts == b.basins[i].num_starts);
    REQUIRE(a.basins[i].representative_start == b.basins[i].representative_start);
    REQUIRE(a.basins[i].parameters == b.basins[i].parameters);
    REQUIRE(a.basins[i].standard_errors.size() == b.basins[i].standard_errors.size());
    for (Eigen::Index j = 0; j < a.basins[i].standard_errors.size(); ++j) {
      REQUIRE(SameDouble(a.basins[i].standard_errors[j], b.basins[i].standard_errors[j]));
    }
  }
}

struct SineCase {
  testing::PointwiseModel model = testing::SineModel();
  Problem problem;
  std::vector<StartCandidate> candidates;
  SearchBox box;
  SineCase() {
    problem = MakeProblem(
        model, [](double x) { return kTruthAmplitude * std::sin(kTwoPi * kTruthFrequency * x); },
        80, 0.0, 0.05, 0.05);
    candidates = {{"user", Vec({1.0, 0.4})}, {"guess:periodogram", Vec({1.5, 1.25})}};
    box.lower = Vec({-5.0, 0.05});
    box.upper = Vec({5.0, 6.0});
  }
};

MultistartSummary RunWithThreads(const Problem& problem, const std::vector<StartCandidate>& c,
                                 const SearchBox& box, int threads, int max_starts) {
  MultistartOptions options;
  options.num_threads = threads;
  options.max_starts = max_starts;
  return RunMultistart(problem, c, box, options);
}

TEST_CASE("Multistart: many-basin sine gives identical summaries with 1, 2 and 8 threads",
          "[engine]") {
  const SineCase sine;
  const MultistartSummary one = RunWithThreads(sine.problem, sine.candidates, sine.box, 1, 64);
  INFO(one.FullReport());
  REQUIRE(one.IsValid());
  CHECK(one.basins.size() > 3);
  CHECK(std::abs(one.basins.front().parameters[1] - kTruthFrequency) < 1e-2);
  RequireSameSummary(one, RunWithThreads(sine.problem, sine.candidates, sine.box, 2, 64));
  RequireSameSummary(one, RunWithThreads(sine.problem, sine.candidates, sine.box, 8, 64));
}

TEST_CASE("Multistart: one-basin decay and a three-peak sum are thread-count independent",
          "[engine]") {
  const testing::PointwiseModel decay = testing::ExpDecayModel();
  const Problem decay_problem = MakeProblem(
      decay, [](double x) { return 3.0 * std::exp(-0.7 * x); }, 40, 0.0, 0.2, 0.01);
  SearchBox decay_box;
  decay_box.lower = Vec({0.1, 0.01});
  decay_box.upper = Vec({10.0, 10.0});
  const std::vector<StartCandidate> decay_candidates = {{"guess:log_linear", Vec({2.0, 0.5})}};
  const MultistartSummary one = RunWithThreads(decay_problem, decay_candidates, decay_box, 1, 0);
  INFO(one.FullReport());
  RequireSameSummary(one, RunWithThreads(decay_problem, decay_candidates, decay_box, 2, 0));
  RequireSameSummary(one, RunWithThreads(decay_problem, decay_candidates, decay_box, 8, 0));

  const testing::PointwiseModel peaks = testing::GaussianPeaksModel(3, true);
  Problem peaks_problem = MakeProblem(
      peaks,
      [](double x) {
        return 3 * std::exp(-0.5 * std::pow((x - 2) / 0.5, 2)) +
               2 * std::exp(-0.5 * std::pow((x - 5) / 0.6, 2)) +
               4 * std::exp(-0.5 * std::pow((x - 8) / 0.4, 2));
      },
      120, 0.0, 0.085, 0.02);
  testing::BoundPeakWidths(3, &peaks_problem);
  SearchBox peaks_box;
  peaks_box.lower = Vec({0.1, 0.0, 0.1, 0.1, 0.0, 0.1, 0.1, 0.0, 0.1});
  peaks_box.upper = Vec({6.0, 10.0, 2.0, 6.0, 10.0, 2.0, 6.0, 10.0, 2.0});
  const std::vector<StartCandidate> peaks_candidates = {
      {"guess:peaks", Vec({2.5, 2.1, 0.6, 2.5, 4.9, 0.6, 3.5, 8.1, 0.6})}};
  const MultistartSummary peaks_one =
      RunWithThreads(peaks_problem, peaks_candidates, peaks_box, 1, 48);
  RequireSameSummary(peaks_one, RunWithThreads(peaks_problem, peaks_candidates, peaks_box, 2, 48));
  RequireSameSummary(peaks_one, RunWithThreads(peaks_problem, peaks_candidates, peaks_box, 8, 48));
}

TEST_CASE("Multistart: failed starts, odd rounds and log scales are thread-count independent",
          "[engine]") {
  // Five candidates across rounds of 3, a model undefined on part of the box and a
  // log-scaled rate: every path of the schedule under three thread counts.
  const testing::PointwiseModel line = testing::PartlyUndefinedLineModel();
  const Problem line_problem = MakeProblem(
      line, [](double x) { return 1.0 + 2.0 * x; }, 30, 0.0, 0.1, 0.01);
  SearchBox line_box;
  line_box.lower = Vec({0.0, -5.0});
  line_box.upper = Vec({10.0, 5.0});
  std::vector<StartCandidate> line_candidates;
  for (int c = 0; c < 5; ++c) {
    line_candidates.push_back({"guess:c" + std::to_string(c), Vec({1.5 * c, 1.0})});
  }
  MultistartOptions options;
  options.round_size = 3;
  options.max_starts = 25;
  options.num_threads = 1;
  const MultistartSummary one = RunMultistart(line_problem, line_candidates, line_box, options);
  INFO(one.FullReport());
  REQUIRE(one.num_non_finite > 0);
  // 20 generated starts, every fourth a jitter slot (ordinals 3, 7, ..., 19); a basin exists
  // from the first round on, so all five slots perturb it.
  int num_jitter = 0;
  for (const StartRecord& record : one.starts) num_jitter += record.origin == "jitter";
  CHECK(num_jitter == 5);
  CHECK(one.starts[5 + 3].origin == "jitter");
  for (int threads : {2, 8}) {
    options.num_threads = threads;
    RequireSameSummary(one, RunMultistart(line_problem, line_candidates, line_box, options));
  }

  const testing::PointwiseModel decay = testing::ExpDecayModel();
  const Problem decay_problem = MakeProblem(
      decay, [](double x) { return 3.0 * std::exp(-0.7 * x); }, 40, 0.0, 0.2, 0.01);
  SearchBox log_box;
  log_box.lower = Vec({0.1, 1e-3});
  log_box.upper = Vec({10.0, 1e3});
  options = MultistartOptions();
  options.round_size = 5;
  options.max_starts = 30;
  options.use_stopping_rule = false;
  options.num_threads = 1;
  const std::vector<StartCandidate> user = {{"user", Vec({1.0, 0.1})}};
  const MultistartSummary log_one = RunMultistart(decay_problem, user, log_box, options);
  for (int threads : {2, 8}) {
    options.num_threads = threads;
    RequireSameSummary(log_one, RunMultistart(decay_problem, user, log_box, options));
  }
  // The rate spans six decades: Sobol starts cover them evenly in log(rate).
  int below_one = 0, sobol = 0;
  for (const StartRecord& record : log_one.starts) {
    if (record.origin != "sobol") continue;
    ++sobol;
    if (record.start[1] < 1.0) ++below_one;
  }
  CHECK(std::abs(below_one - sobol / 2) <= 2);
}

TEST_CASE("Multistart: jitter reacts to the rounds before the one in flight", "[engine]") {
  // Eight candidates where the model is undefined (intercept > 5): round 0 finds no basin,
  // round 1's Sobol points do. Round 1 is planned after round 0, round 2 while round 1 runs
  // (from round 0 only), round 3 after round 1: the jitter slots (ordinals 3, 7, ..., 23,
  // starts 11, 15, ..., 31) are Sobol points in rounds 1 and 2 and perturb a basin in 3.
  const testing::PointwiseModel line = testing::PartlyUndefinedLineModel();
  const Problem problem = MakeProblem(
      line, [](double x) { return 1.0 + 2.0 * x; }, 30, 0.0, 0.1, 0.01);
  SearchBox box;
  box.lower = Vec({0.0, -5.0});
  box.upper = Vec({10.0, 5.0});
  std::vector<StartCandidate> candidates;
  for (int c = 0; c < 8; ++c) {
    candidates.push_back({"guess:c" + std::to_string(c), Vec({6.0 + 0.5 * c, 1.0})});
  }
  MultistartOptions options;
  options.max_starts = 32;
  options.use_stopping_rule = false;
  for (int threads : {1, 2}) {
    options.num_threads = threads;
    const MultistartSummary summary = RunMultistart(problem, candidates, box, options);
    INFO(summary.FullReport());
    REQUIRE(summary.num_starts_run == 32);
    for (int c = 0; c < 8; ++c) REQUIRE(summary.starts[c].basin == -1);
    bool round_one_found_a_basin = false;
    for (int index = 8; index < 16; ++index) {
      round_one_found_a_basin = round_one_found_a_basin || summary.starts[index].basin >= 0;
    }
    REQUIRE(round_one_found_a_basin);
    for (int index : {11, 15, 19, 23}) CHECK(summary.starts[index].origin == "sobol");
    for (int index : {27, 31}) CHECK(summary.starts[index].origin == "jitter");
  }
}

TEST_CASE("Multistart: a different seed moves the quasi-random starts", "[engine]") {
  const SineCase sine;
  MultistartOptions options;
  options.max_starts = 16;
  options.use_stopping_rule = false;
  const MultistartSummary a = RunMultistart(sine.problem, sine.candidates, sine.box, options);
  options.seed = 8;
  const MultistartSummary b = RunMultistart(sine.problem, sine.candidates, sine.box, options);
  REQUIRE(a.starts.size() == b.starts.size());
  CHECK(a.starts[0].start == b.starts[0].start);  // the user's start does not move
  CHECK(a.starts[2].origin == "sobol");
  CHECK(a.starts[2].start != b.starts[2].start);
}

}  // namespace
}  // namespace foothold
