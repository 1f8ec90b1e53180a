// MultistartOptions::Validate and ValidateMultistartInput: every message names the field,
// the value and the rule.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

std::string OptionsError(const MultistartOptions& options) {
  std::string error;
  REQUIRE_FALSE(options.Validate(&error));
  return error;
}

TEST_CASE("MultistartOptions: defaults are valid and the budget scales with parameters",
          "[engine]") {
  const MultistartOptions options;
  std::string error;
  CHECK(options.Validate(&error));
  CHECK(options.seed == 7);
  CHECK(options.num_threads >= 1);
  CHECK(options.ResolvedMaxStarts(1) == 16);
  CHECK(options.ResolvedMaxStarts(2) == 16);
  CHECK(options.ResolvedMaxStarts(5) == 40);
  CHECK(options.ResolvedMaxStarts(64) == 256);
  MultistartOptions fixed;
  fixed.max_starts = 10;
  CHECK(fixed.ResolvedMaxStarts(64) == 10);
}

TEST_CASE("MultistartOptions: Validate names field, value and rule", "[engine]") {
  MultistartOptions options;
  options.max_starts = -1;
  CHECK(OptionsError(options) == "max_starts = -1: must be in [0, 100000] (0 means the default)");
  options = MultistartOptions();
  options.num_threads = 0;
  CHECK(OptionsError(options) == "num_threads = 0: must be in [1, 256]");
  options = MultistartOptions();
  options.round_size = 0;
  CHECK(OptionsError(options) == "round_size = 0: must be in [1, 4096]");
  options = MultistartOptions();
  options.deadline_seconds = 0;
  CHECK(OptionsError(options) == "deadline_seconds = 0: must be > 0");
  options = MultistartOptions();
  options.stopping_threshold = -0.5;
  CHECK(OptionsError(options) == "stopping_threshold = -0.5: must be finite and > 0");
  options = MultistartOptions();
  options.jitter_share = 1.5;
  CHECK(OptionsError(options) == "jitter_share = 1.5: must be in [0, 1]");
  options = MultistartOptions();
  options.cost_relative_tolerance = std::nan("");
  CHECK(OptionsError(options) == "cost_relative_tolerance = nan: must be in [0, 1)");
  options = MultistartOptions();
  options.basin_stderr_multiple = -1;
  CHECK(OptionsError(options) == "basin_stderr_multiple = -1: must be finite and >= 0");
  options = MultistartOptions();
  options.ambiguity_chi2_gap = std::numeric_limits<double>::infinity();
  CHECK(OptionsError(options) == "ambiguity_chi2_gap = inf: must be finite and >= 0");
  options = MultistartOptions();
  options.local.max_iterations = -1;
  CHECK(OptionsError(options) == "local.max_iterations = -1: must be >= 0");
}

struct LineCase {
  testing::PointwiseModel model = testing::PartlyUndefinedLineModel();
  Problem problem;
  LineCase() {
    problem = MakeProblem(
        model, [](double x) { return 1 + 2 * x; }, 10, 0, 0.1, 0);
  }
};

std::string InputError(const Problem& problem, const std::vector<StartCandidate>& candidates,
                       const SearchBox& box, const MultistartOptions& options = {}) {
  std::string error;
  REQUIRE_FALSE(ValidateMultistartInput(problem, candidates, box, options, &error));
  // RunMultistart refuses the same input with the same message and runs nothing.
  const MultistartSummary summary = RunMultistart(problem, candidates, box, options);
  CHECK(summary.stop == MultistartStop::kInvalidInput);
  CHECK_FALSE(summary.IsValid());
  CHECK(summary.message == error);
  CHECK(summary.starts.empty());
  return error;
}

TEST_CASE("ValidateMultistartInput: candidates, box and fixed parameters", "[engine]") {
  LineCase line;
  std::string error;
  CHECK(ValidateMultistartInput(line.problem, {{"user", Vec({1, 2})}}, {}, {}, &error));
  CHECK(InputError(line.problem, {{"user", Vec({1})}}, {}) ==
        "candidates[0] (user).parameters has size 1: must have the model's 2 parameters");
  CHECK(InputError(line.problem, {{"user", Vec({1, 2})}, {"guess:x", Vec({1, INFINITY})}}, {}) ==
        "candidates[1] (guess:x).parameters[1] = inf: must be finite");
  CHECK(InputError(line.problem, {{"", Vec({1, 2})}}, {}) ==
        "candidates[0].origin is empty: must name where the start came from (\"user\", "
        "\"guess:<name>\")");
  SearchBox box;
  box.lower = Vec({0, 3});
  box.upper = Vec({1, 2});
  CHECK(InputError(line.problem, {}, box) ==
        "box.lower[1] = 3, box.upper[1] = 2: must be numbers with lower <= upper");
  box.lower = Vec({0});
  CHECK(InputError(line.problem, {}, box) == "box.lower has size 1: must be 0 or 2");
  box = SearchBox();
  box.lower = Vec({-1, -1});
  box.upper = Vec({1, 1});
  box.scale = {BoxScale::kLog, BoxScale::kAuto};
  CHECK(InputError(line.problem, {}, box) ==
        "box.scale[0] = log but the sampled range starts at -1: a log scale needs a lower end > 0");

  line.problem.is_fixed = {false, true};
  CHECK(InputError(line.problem, {}, {}) ==
        "parameter 1 is fixed but no candidate gives its value: at least one candidate is needed");
  MultistartOptions options;
  options.jitter_share = 2;
  CHECK(InputError(line.problem, {{"user", Vec({1, 2})}}, {}, options) ==
        "options.jitter_share = 2: must be in [0, 1]");
}

TEST_CASE("Multistart: a fixed parameter keeps the first candidate's value", "[engine]") {
  LineCase line;
  line.problem.is_fixed = {false, true};
  MultistartOptions options;
  options.max_starts = 12;
  const MultistartSummary summary = RunMultistart(
      line.problem, {{"user", Vec({0.5, 2.0})}, {"guess:b", Vec({0.7, 9.0})}}, {}, options);
  REQUIRE(summary.IsValid());
  for (const StartRecord& record : summary.starts) {
    CHECK(record.start[1] == 2.0);
    CHECK(record.end[1] == 2.0);
  }
  REQUIRE(!summary.basins.empty());
  CHECK(summary.basins[0].standard_errors[1] == 0);
}

TEST_CASE("Multistart: candidates are clamped into the bounds, derived boxes are finite",
          "[engine]") {
  LineCase line;
  line.problem.lower = Vec({0.0, -INFINITY});
  line.problem.upper = Vec({4.0, INFINITY});
  MultistartOptions options;
  options.max_starts = 16;
  const MultistartSummary summary =
      RunMultistart(line.problem, {{"user", Vec({4.5, 3.0})}}, {}, options);
  REQUIRE(summary.IsValid());
  CHECK(summary.starts[0].start[0] == 4.0);
  for (const StartRecord& record : summary.starts) {
    CHECK(record.start.allFinite());
    CHECK(record.start[0] >= 0.0);
    CHECK(record.start[0] <= 4.0);
    // Slope box: 3 +- 2 * 3 from the candidate.
    CHECK(record.start[1] >= -3.0);
    CHECK(record.start[1] <= 9.0);
  }
}

}  // namespace
}  // namespace foothold

namespace foothold {
namespace {

// A start source as the heuristics layer would write one: two named guesses and a box.
class TwoGuesses : public StartSource {
 public:
  std::vector<StartCandidate> Candidates(const Problem& problem) const override {
    return {{"guess:ends", testing::Vec({0.5, 1.5})}, {"guess:slope", testing::Vec({1.2, 2.5})}};
  }
  SearchBox Box(const Problem& problem) const override {
    SearchBox box;
    box.lower = testing::Vec({-1.0, -1.0});
    box.upper = testing::Vec({2.0, 4.0});
    return box;
  }
};

TEST_CASE("Multistart: a StartSource supplies the candidates and the box", "[engine]") {
  LineCase line;
  MultistartOptions options;
  options.max_starts = 10;
  const MultistartSummary summary = RunMultistart(line.problem, TwoGuesses(), options);
  REQUIRE(summary.num_starts_run == 10);
  CHECK(summary.starts[0].origin == "guess:ends");
  CHECK(summary.starts[1].origin == "guess:slope");
  for (size_t i = 2; i < summary.starts.size(); ++i) {
    CHECK(summary.starts[i].start[0] >= -1.0);
    CHECK(summary.starts[i].start[0] <= 2.0);
    CHECK(summary.starts[i].start[1] >= -1.0);
    CHECK(summary.starts[i].start[1] <= 4.0);
  }
}

}  // namespace
}  // namespace foothold
