// The default budget's extension (MultistartOptions::budget_extension_factor): runs past the
// budget only while the best basin is new, never changes the starts within the budget, and
// never applies to an explicit max_starts.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "engine/multistart/multistart.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

// First start index that reached basin 0, -1 when none converged.
int FirstStartOfBest(const MultistartSummary& summary) {
  int first = -1;
  for (const StartRecord& record : summary.starts) {
    if (record.basin == 0 && (first < 0 || record.index < first)) first = record.index;
  }
  return first;
}

// The many-basin sine problem seeded far from the right frequency (truth 1.3, start 0.4).
struct SineCase {
  testing::SearchCase search = testing::ManyBasinSineCase();
  const Problem& problem = search.problem;
  const SearchBox& box = search.box;
  MultistartSummary Run(int factor, int max_starts = 0) const {
    MultistartOptions options;
    options.use_stopping_rule = false;  // the budget alone decides
    options.budget_extension_factor = factor;
    options.max_starts = max_starts;
    options.num_threads = 2;
    return RunMultistart(problem, {{"user", Vec({1.0, 0.4})}}, box, options);
  }
};

TEST_CASE("Multistart: the budget extends only while the best basin is new", "[engine]") {
  const SineCase sine;
  const int budget = MultistartOptions().ResolvedMaxStarts(2);  // max(16, 8 p) for p = 2
  const MultistartSummary fixed = sine.Run(1);
  const MultistartSummary extended = sine.Run(4);
  INFO(fixed.BriefReport() << "\n" << extended.BriefReport());
  REQUIRE(fixed.num_starts_run == budget);
  REQUIRE(extended.num_starts_run >= budget);
  REQUIRE(extended.num_starts_run <= 4 * budget);

  // Within the budget both runs planned and ran the same starts.
  for (int i = 0; i < budget; ++i) {
    INFO("start " << i);
    CHECK(extended.starts[i].origin == fixed.starts[i].origin);
    CHECK((extended.starts[i].start - fixed.starts[i].start).norm() == 0.0);
    CHECK(extended.starts[i].rss == fixed.starts[i].rss);
  }
  const int first_fixed = FirstStartOfBest(fixed);
  REQUIRE(first_fixed >= 0);
  if (2 * first_fixed < budget) {
    // The best had stood for as many starts as it took to find it: no extension.
    CHECK(extended.num_starts_run == budget);
  } else {
    CHECK(extended.num_starts_run > budget);
    // It stopped once the best had stood long enough, or at the ceiling.
    const int first = FirstStartOfBest(extended);
    CHECK((2 * first < extended.num_starts_run || extended.num_starts_run == 4 * budget));
    CHECK(extended.basins.front().rss <= fixed.basins.front().rss);
    CHECK(extended.num_starts_planned == extended.num_starts_run);
  }
  CHECK(extended.stop == MultistartStop::kBudget);
}

TEST_CASE("Multistart: an explicit max_starts is never extended", "[engine]") {
  const SineCase sine;
  const MultistartSummary summary = sine.Run(4, 12);
  CHECK(summary.num_starts_run == 12);
  CHECK(summary.num_starts_planned == 12);
}

TEST_CASE("Multistart: the extension is the same on 1 and 8 threads", "[engine]") {
  const SineCase sine;
  MultistartOptions options;
  options.use_stopping_rule = false;
  MultistartSummary runs[2];
  const int threads[2] = {1, 8};
  for (int k = 0; k < 2; ++k) {
    options.num_threads = threads[k];
    runs[k] = RunMultistart(sine.problem, {{"user", Vec({1.0, 0.4})}}, sine.box, options);
  }
  REQUIRE(runs[0].num_starts_run == runs[1].num_starts_run);
  for (int i = 0; i < runs[0].num_starts_run; ++i)
    CHECK(runs[0].starts[i].rss == runs[1].starts[i].rss);
  CHECK(runs[0].message == runs[1].message);
}

TEST_CASE("MultistartOptions: budget_extension_factor in [1, 64]", "[engine]") {
  MultistartOptions options;
  std::string error;
  options.budget_extension_factor = 0;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error.find("budget_extension_factor = 0") != std::string::npos);
  options.budget_extension_factor = 65;
  CHECK_FALSE(options.Validate(&error));
  options.budget_extension_factor = 1;
  CHECK(options.Validate(&error));
  CHECK(options.ExtendedMaxStarts(2) == options.ResolvedMaxStarts(2));
  options.budget_extension_factor = 4;
  CHECK(options.ExtendedMaxStarts(2) == 64);
  CHECK(options.ExtendedMaxStarts(40) == 256);  // the default budget's cap holds
  options.max_starts = 10;
  CHECK(options.ExtendedMaxStarts(2) == 10);
}

}  // namespace
}  // namespace foothold
