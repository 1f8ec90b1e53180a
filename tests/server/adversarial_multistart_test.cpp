// Issue #4 acceptance: best-of-multistart reaches the reference optimum on the adversarial
// corpus (tests/heuristics/corpus/adversarial.h): every family's guess candidates poisoned by
// a seeded rule, and nearly merged multi-peak datasets. The fit path is the default one
// (PrepareFit, then RunPreparedFit: budget max(16, 8p) <= 256, extended while the best
// basin is new, seed 7, stopping rule), with
// prepared.candidates replaced by the poisoned ones (same count, "guess:poisoned_..."
// names). Success: the best rss <= reference * (1 + 1e-6), the reference being the best of
// the fits from the truth and from the slightly perturbed truth (reference_optimum.h).
//
// Target (issue #4): 99.5% per family; with fewer than 200 datasets per family that means
// no miss at all, which the test asserts for every row. Three references (measured
// 2026-12-02) are no attained optimum but a point on a ridge running to infinity: two
// peaks of heights +-2.2e12 cancelling each other, a logistic5 asymmetry of 1.8e-8 (bottom
// -7 on data of scale 1e-6) and one of 2.7e5. Local fits there stop at the iteration limit
// (or at a relative step of 1e-16 far out on the ridge), and so do the multistart's starts
// that find them: those count as reached when a start went at least as low and the verdict
// flags runaway_descent, since the answer then says that the cost falls further than its
// best basin and which parameters run off (docs/multistart.md, "Runaway starts"). The table
// counts them ("of which runaway") and how often the flag fires in each row.
//
// Runtime: the full corpus (40 datasets per family, up to 5000 points) takes far longer than
// a CI test may, so the test fits each family's datasets of at most kMaxPoints points plus
// its kLargeCases largest ones. FOOTHOLD_ADVERSARIAL_MAX_POINTS (0: all),
// FOOTHOLD_ADVERSARIAL_FAMILY (one row only) and FOOTHOLD_ADVERSARIAL_CASES explore more.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <map>
#include <string>
#include <vector>

#include "engine/multistart/internal/start_schedule.h"
#include "engine/stats/fit_statistics.h"
#include "server/fit_service.h"
#include "tests/heuristics/corpus/adversarial.h"
#include "tests/heuristics/corpus/corpus.h"
#include "tests/heuristics/corpus/reference_optimum.h"

namespace foothold {
namespace {

constexpr uint64_t kCorpusSeed = 20261201;
constexpr int kCasesPerFamily = 40;
constexpr int kMergedCasesPerFamily = 40;
constexpr int kMaxPoints = 400;
constexpr int kLargeCases = 2;
constexpr double kRelativeRssTolerance = 1e-6;
constexpr double kRequiredRate = 0.995;

struct CaseResult {
  bool is_reached = false;
  bool is_runaway = false;  // reached as a flagged runaway descent (see RunCase)
  bool is_flagged = false;  // the verdict has runaway_descent
  int num_starts = 0;
  double seconds = 0;
  std::string message;
};

bool BuildRequest(const corpus::CorpusCase& c, FitRequest* request, std::string* error) {
  request->label = c.label;
  request->model.family = c.request.name;
  if (c.request.name == "polynomial") request->model.degree = c.request.degree;
  if (c.request.name.rfind("multi_", 0) == 0) request->model.peaks = c.request.peaks;
  request->threads = 1;  // the result does not depend on it; CI machines are shared
  return request->data.AddColumn("x", std::vector<double>(c.x.data(), c.x.data() + c.x.size()),
                                 error) &&
         request->data.AddColumn("y", std::vector<double>(c.y.data(), c.y.data() + c.y.size()),
                                 error);
}

// The guesser's candidates in `prepared`, each replaced by its poisoned twin.
void PoisonPrepared(const corpus::CorpusCase& c, int case_index, PreparedFit* prepared) {
  corpus::PoisonContext context;
  context.names = prepared->model->ParameterNames();
  context.lower = prepared->problem.lower;
  context.upper = prepared->problem.upper;
  context.x_min = c.x.minCoeff();
  context.x_max = c.x.maxCoeff();
  context.y_range = c.y.maxCoeff() - c.y.minCoeff();
  context.seed = kCorpusSeed;
  context.case_index = case_index;
  std::vector<corpus::NamedStart> originals;
  for (const StartCandidate& candidate : prepared->candidates) {
    const std::string prefix = "guess:";
    std::string name = candidate.origin;
    if (name.rfind(prefix, 0) == 0) name = name.substr(prefix.size());
    originals.push_back({name, candidate.parameters});
  }
  const std::vector<corpus::NamedStart> poisoned = corpus::PoisonCandidates(context, originals);
  prepared->candidates.clear();
  for (const corpus::NamedStart& start : poisoned) {
    prepared->candidates.push_back({"guess:" + start.name, start.parameters});
  }
  prepared->start = prepared->candidates.front().parameters;
  prepared->start_origin = prepared->candidates.front().origin;
}

// Which parameters of the reference optimum lie outside the box the Sobol starts sample: a
// miss with an empty list is the schedule's, not the box's.
std::string DescribeBox(const PreparedFit& prepared, const Eigen::VectorXd& optimum) {
  const internal::ResolvedBox box =
      internal::ResolveBox(prepared.problem, prepared.candidates, prepared.box);
  const std::vector<std::string>& names = prepared.model->ParameterNames();
  std::string outside;
  for (int j : box.free) {
    if (optimum.size() == 0 || (optimum[j] >= box.lower[j] && optimum[j] <= box.upper[j])) continue;
    char text[160];
    std::snprintf(text, sizeof(text), " %s=%.4g not in [%.4g, %.4g]", names[j].c_str(), optimum[j],
                  box.lower[j], box.upper[j]);
    outside += text;
  }
  return outside.empty() ? "optimum inside the Sobol box" : "outside the Sobol box:" + outside;
}

CaseResult RunCase(const corpus::CorpusCase& c, int case_index) {
  CaseResult result;
  FitRequest request;
  PreparedFit prepared;
  std::string error;
  if (!BuildRequest(c, &request, &error) || !PrepareFit(request, &prepared, &error)) {
    result.message = "prepare: " + error;
    return result;
  }
  PoisonPrepared(c, case_index, &prepared);
  const std::clock_t started = std::clock();
  const FitOutcome outcome = RunPreparedFit(request, prepared);
  // Processor time, not wall time: the machines are shared.
  result.seconds = static_cast<double>(std::clock() - started) / CLOCKS_PER_SEC;
  result.num_starts = static_cast<int>(outcome.starts.size());

  LocalFitOptions local;
  local.lm = prepared.solver_options;
  const corpus::ReferenceOptimum reference =
      corpus::FindReferenceOptimum(prepared.problem, c.truth, local, kCorpusSeed + case_index);
  const double best = outcome.best.final_cost;
  const double reach = reference.rss * (1 + kRelativeRssTolerance);
  result.is_reached = std::isfinite(best) && best <= reach;
  // A reference on a ridge to infinity is no attained optimum: the local fits that find it
  // stop at the iteration limit, or at a relative step of 1e-16 far out on the ridge. The
  // search reaches it when some start went at least as low and the verdict says so
  // (runaway_descent): the answer names the lower cost and the parameters running off
  // instead of presenting the best finite basin as the optimum.
  const std::vector<std::string>& flags = outcome.verdict.flags;
  const bool flagged = std::find(flags.begin(), flags.end(), "runaway_descent") != flags.end();
  result.is_flagged = flagged;
  if (!result.is_reached && flagged && outcome.runaway_rss <= reach) {
    result.is_reached = result.is_runaway = true;
  }
  char text[320];
  std::snprintf(text, sizeof(text),
                "best rss %.9g (%s) vs reference %.9g (start %d); %d starts, %zu basins, stop %s",
                best, prepared.candidates.front().origin.c_str(), reference.rss,
                reference.best_start, result.num_starts, outcome.basins.size(),
                outcome.search_stop.c_str());
  result.message = text;
  if (result.is_runaway) {
    std::snprintf(text, sizeof(text), "; %d runaway starts down to rss %.9g, beyond the box:",
                  outcome.runaway_starts, outcome.runaway_rss);
    result.message += text;
    for (const std::string& name : outcome.runaway_parameters) result.message += " " + name;
  }
  if (!result.is_reached) {
    result.message += "; " + DescribeBox(prepared, reference.parameters);
    // A huge condition number would say the reference itself is barely determined.
    const FitStatistics at_reference = ComputeFitStatistics(prepared.problem, reference.parameters);
    std::snprintf(text, sizeof(text), "; condition number at the reference %.3g",
                  at_reference.condition_number);
    result.message += text;
    result.message += "; reference fit: " + reference.fit.message;
    int below = 0;
    const StartRecord* lowest = nullptr;
    for (const StartRecord& record : outcome.starts) {
      if (record.converged || !(record.rss < best)) continue;
      ++below;
      if (lowest == nullptr || record.rss < lowest->rss) lowest = &record;
    }
    if (lowest != nullptr) {
      std::snprintf(text, sizeof(text), "; %d unconverged starts below the best, lowest %.9g: ",
                    below, lowest->rss);
      result.message += text + lowest->message;
    }
    std::snprintf(text, sizeof(text), " (%d iterations)", reference.fit.num_iterations);
    result.message += text;
  }
  return result;
}

struct FamilyRow {
  int num_cases = 0;
  int num_reached = 0;
  int num_runaway = 0;  // of num_reached
  int num_flagged = 0;  // cases whose verdict has runaway_descent
  std::vector<int> starts;
  double seconds = 0;
};

int Median(std::vector<int> values) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  return values[values.size() / 2];
}

// Each family's cases of at most max_points points, plus its kLargeCases largest ones.
std::vector<int> SelectCases(const std::vector<corpus::CorpusCase>& cases, int max_points) {
  std::map<std::string, std::vector<int>> by_family;
  for (size_t i = 0; i < cases.size(); ++i) by_family[cases[i].request.name].push_back(i);
  std::vector<int> selected;
  for (size_t i = 0; i < cases.size(); ++i) {
    const std::string& family = cases[i].request.name;
    std::vector<int> members = by_family[family];
    if (members.front() != static_cast<int>(i)) continue;  // once per family
    std::vector<int> small, large;
    for (int m : members) {
      (max_points <= 0 || cases[m].x.size() <= max_points ? small : large).push_back(m);
    }
    std::sort(large.begin(), large.end(),
              [&](int a, int b) { return cases[a].x.size() > cases[b].x.size(); });
    if (large.size() > static_cast<size_t>(kLargeCases)) large.resize(kLargeCases);
    small.insert(small.end(), large.begin(), large.end());
    std::sort(small.begin(), small.end());
    selected.insert(selected.end(), small.begin(), small.end());
  }
  return selected;
}

TEST_CASE("Multistart: poisoned guesses and nearly merged peaks still reach the reference optimum",
          "[server][multistart][adversarial]") {
  const char* max_points_text = std::getenv("FOOTHOLD_ADVERSARIAL_MAX_POINTS");
  const char* family_text = std::getenv("FOOTHOLD_ADVERSARIAL_FAMILY");
  const char* cases_text = std::getenv("FOOTHOLD_ADVERSARIAL_CASES");
  const int max_points = max_points_text ? std::atoi(max_points_text) : kMaxPoints;
  const int num_cases = cases_text ? std::atoi(cases_text) : kCasesPerFamily;
  const std::string only_family = family_text ? family_text : "";

  std::vector<corpus::CorpusCase> cases = corpus::GenerateCorpus(kCorpusSeed, num_cases);
  std::vector<corpus::CorpusCase> merged =
      corpus::GenerateMergedPeaks(kCorpusSeed, cases_text ? num_cases : kMergedCasesPerFamily);
  for (corpus::CorpusCase& c : merged) c.request.name += "/merged";
  cases.insert(cases.end(), merged.begin(), merged.end());
  const std::vector<int> selected = SelectCases(cases, max_points);

  std::map<std::string, FamilyRow> rows;
  std::vector<std::string> order;
  double total_seconds = 0;
  for (int index : selected) {
    corpus::CorpusCase c = cases[index];
    const std::string row = c.request.name;
    if (!only_family.empty() && row != only_family) continue;
    const size_t slash = c.request.name.find('/');
    if (slash != std::string::npos) c.request.name = c.request.name.substr(0, slash);
    if (rows.count(row) == 0) order.push_back(row);
    const CaseResult result = RunCase(c, index);
    FamilyRow& family = rows[row];
    ++family.num_cases;
    if (result.is_reached) ++family.num_reached;
    if (result.is_runaway) ++family.num_runaway;
    if (result.is_flagged) ++family.num_flagged;
    family.starts.push_back(result.num_starts);
    family.seconds += result.seconds;
    total_seconds += result.seconds;
    if (!result.is_reached || result.is_runaway) {
      std::printf("%s %s: %s\n", result.is_reached ? "runaway" : "missed", c.label.c_str(),
                  result.message.c_str());
    }
  }
  std::printf(
      "\n| family | datasets | reached | of which runaway | rate | target 99.5%% | "
      "runaway_descent flagged | median starts | cpu s |\n");
  std::printf("|---|---|---|---|---|---|---|---|---|\n");
  for (const std::string& name : order) {
    const FamilyRow& row = rows[name];
    const bool met = row.num_reached >= std::ceil(kRequiredRate * row.num_cases);
    std::printf("| %s | %d | %d | %d | %.1f%% | %s | %d | %d | %.1f |\n", name.c_str(),
                row.num_cases, row.num_reached, row.num_runaway,
                100.0 * row.num_reached / row.num_cases, met ? "met" : "NOT met", row.num_flagged,
                Median(row.starts), row.seconds);
  }
  std::printf("\nmultistart processor time %.1f s in total\n", total_seconds);
  for (const std::string& name : order) {
    const FamilyRow& row = rows[name];
    INFO(name << ": " << row.num_reached << " of " << row.num_cases << " reached");
    CHECK(row.num_reached >= std::ceil(kRequiredRate * row.num_cases));
  }
}

}  // namespace
}  // namespace foothold
