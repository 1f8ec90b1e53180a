// Certification against NIST StRD nonlinear regression without NIST's starts:
// foothold's own generic guesses (GuessGeneric, the guesser for expression
// models) seed the multistart driver (RunMultistart), and the best basin is
// scored against NIST's certified values. DESIGN.md §7 asks for LRE >= 6 on
// every parameter from no start at all. The data, provenance and scoring are
// those of nist_strd_test.cpp (tests/data/nist-strd/README.md; NIST ITL,
// https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml).

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"
#include "engine/multistart/multistart.h"
#include "engine/solve/problem.h"
#include "engine/stats/fit_statistics.h"
#include "heuristics/guess.h"
#include "tests/certification/certification_support.h"
#include "tests/certification/nist_checks.h"
#include "tests/certification/nist_strd.h"
#include "tests/certification/nist_symmetries.h"

namespace foothold {
namespace certification {
namespace {

// The multistart run is fixed: seed, two threads (results do not depend on the
// count) and the driver's default budget max(16, 8 p) capped at 256 with the
// stopping rule on.
constexpr std::uint64_t kSeed = 7;
constexpr int kNumThreads = 2;

// Every problem is held to the pass marks of nist_checks.h, Lanczos1 to its float64 limit
// there as from NIST's starts. Gauss2 and Gauss3 were search shortfalls here (no start in
// the certified basin) until the generic guesser seeded its starts at the data's peaks; they
// now meet every pass mark (measured 2026-12-02 over seeds 1-12: parameter LRE >= 9.0 on
// Gauss2, 10.5 on Gauss3).

struct NoStartRun {
  std::string problem;
  std::string difficulty;
  bool is_set_up = false;
  std::string setup_error;
  int num_candidates = 0;
  int num_starts = 0;
  int num_converged = 0;
  int num_basins = 0;
  std::string stop;
  std::string message;
  Eigen::VectorXd parameters;
  Eigen::VectorXd standard_errors;
  int num_symmetry_images = 1;
  bool is_image = false;  // scored at a symmetric image, not at the end point itself
  NistScore score;        // at the image closest to the certified values
  double seconds = 0;
};

NoStartRun FitWithoutStart(const NistProblem &p) {
  NoStartRun run;
  run.problem = p.name;
  run.difficulty = p.difficulty;
  NistFit fit;
  if (!SetUpNistFit(p, &fit, &run.setup_error)) return run;
  const Problem &problem = fit.problem;
  const ExpressionModel &model = *fit.model;

  GuessResult guess;
  if (!GuessGeneric(model, problem.data, Eigen::VectorXd(), Eigen::VectorXd(), GuessOptions{},
                    &guess, &run.setup_error)) {
    run.setup_error = "GuessGeneric: " + run.setup_error;
    return run;
  }
  std::vector<StartCandidate> candidates;
  for (const GuessCandidate &c : guess.candidates) {
    candidates.push_back({"guess:" + c.name, c.parameters});
  }
  SearchBox box;
  box.lower = guess.lower;
  box.upper = guess.upper;
  for (int j = 0; j < p.num_params; ++j) {
    const bool is_log = j < static_cast<int>(guess.log_scale.size()) && guess.log_scale[j] &&
                        j < guess.lower.size() && guess.lower[j] > 0;
    box.scale.push_back(is_log ? BoxScale::kLog : BoxScale::kAuto);
  }
  MultistartOptions options;
  options.seed = kSeed;
  options.num_threads = kNumThreads;
  if (!ValidateMultistartInput(problem, candidates, box, options, &run.setup_error)) {
    run.setup_error = "multistart input: " + run.setup_error;
    return run;
  }
  run.is_set_up = true;
  const MultistartSummary summary = RunMultistart(problem, candidates, box, options);
  run.num_candidates = summary.num_candidates;
  run.num_starts = summary.num_starts_run;
  run.num_converged = summary.num_converged;
  run.num_basins = static_cast<int>(summary.basins.size());
  run.stop = ToString(summary.stop);
  run.message = summary.message;
  for (const StartRecord &s : summary.starts) run.seconds += s.seconds;
  if (summary.basins.empty()) return run;

  // The best basin's representative, in the model's parameter order (the
  // expression declares no symmetries, so canonical order is the model's
  // order).
  run.parameters = summary.basins.front().parameters;
  const FitStatistics statistics = ComputeFitStatistics(problem, run.parameters);
  run.score.rss = statistics.rss;
  run.standard_errors = statistics.standard_errors;
  const std::vector<SignedPermutation> group = SymmetryGroup(p.name, p.num_params);
  run.num_symmetry_images = static_cast<int>(group.size());
  run.score.min_param_lre = -1;
  for (size_t k = 0; k < group.size(); ++k) {
    const Eigen::VectorXd image = Apply(group[k], run.parameters, false);
    const Eigen::VectorXd image_sd = Apply(group[k], run.standard_errors, true);
    double param_lre = kMaxLre;
    double sd_lre = kMaxLre;
    for (int j = 0; j < p.num_params; ++j) {
      param_lre = std::min(param_lre, Lre(image[j], p.certified[j]));
      sd_lre = std::min(sd_lre, Lre(image_sd[j], p.certified_sd[j]));
    }
    if (param_lre > run.score.min_param_lre) {
      run.score.min_param_lre = param_lre;
      run.score.min_sd_lre = sd_lre;
      run.score.min_sd_lre_at_certified_rss = kMaxLre;
      const double rescale = std::sqrt(p.certified_rss / run.score.rss);
      for (int j = 0; j < p.num_params; ++j) {
        run.score.min_sd_lre_at_certified_rss = std::min(
            run.score.min_sd_lre_at_certified_rss, Lre(image_sd[j] * rescale, p.certified_sd[j]));
      }
      run.is_image = k > 0;
    }
  }
  run.score.rss_lre = Lre(run.score.rss, p.certified_rss);
  return run;
}

TEST_CASE("NIST StRD: the symmetries used in scoring leave each model unchanged",
          "[certification][nist]") {
  constexpr double kSymmetryTolerance = 1e-12;
  std::string error;
  int num_with_symmetries = 0;
  for (const NistProblem &p : NistProblems()) {
    const std::vector<SignedPermutation> group = SymmetryGroup(p.name, p.num_params);
    if (group.size() == 1) continue;
    ++num_with_symmetries;
    INFO("NIST StRD problem " << p.name << ", " << group.size() << " images");
    std::unique_ptr<ExpressionModel> model = ParseExpressionModel(
        p.model, p.predictors, p.ParameterNames(), ExpressionOptions{}, &error);
    REQUIRE(model != nullptr);
    Dataset data;
    REQUIRE(BuildNistDataset(p, &data, &error));
    const Eigen::VectorXd certified =
        Eigen::Map<const Eigen::VectorXd>(p.certified.data(), p.certified.size());
    Eigen::VectorXd values(data.NumPoints());
    model->Evaluate(data.predictors, certified.data(), values.data());
    for (const SignedPermutation &map : group) {
      const Eigen::VectorXd image = Apply(map, certified, false);
      Eigen::VectorXd image_values(data.NumPoints());
      model->Evaluate(data.predictors, image.data(), image_values.data());
      CHECK((image_values - values).cwiseAbs().maxCoeff() <=
            kSymmetryTolerance * values.cwiseAbs().maxCoeff());
    }
  }
  // Lanczos1-3 (6 images each), Gauss1-3 (8), MGH17 (2), Eckerle4 (2), ENSO
  // (8).
  CHECK(num_with_symmetries == 9);
  CHECK(SymmetryGroup("Lanczos1", 6).size() == 6);
  CHECK(SymmetryGroup("Gauss1", 8).size() == 8);
  CHECK(SymmetryGroup("ENSO", 9).size() == 8);
}

TEST_CASE(
    "NIST StRD: from no start, generic guesses and multistart reach the "
    "certified values",
    "[certification][nist][multistart]") {
  const std::vector<NistProblem> &problems = NistProblems();
  REQUIRE(problems.size() == 27);

  std::vector<NoStartRun> runs;
  for (const NistProblem &p : problems) runs.push_back(FitWithoutStart(p));

  std::printf(
      "\nNIST StRD from no start: GuessGeneric + RunMultistart (seed "
      "%llu, %d threads)\n",
      static_cast<unsigned long long>(kSeed), kNumThreads);
  std::printf("%-9s %-7s %5s %6s %5s %6s %5s %7s %8s %7s %7s  %s\n", "problem", "diff.", "cands",
              "starts", "conv", "basins", "image", "LRE(b)", "LRE(rss)", "LRE(sd)", "fit s",
              "stop");
  for (const NoStartRun &r : runs) {
    std::printf("%-9s %-7s %5d %6d %5d %6d %5s %7.1f %8.1f %7.1f %7.2f  %s\n", r.problem.c_str(),
                r.difficulty.c_str(), r.num_candidates, r.num_starts, r.num_converged, r.num_basins,
                r.is_image ? "yes" : "no", r.score.min_param_lre, r.score.rss_lre,
                r.score.min_sd_lre, r.seconds,
                r.is_set_up ? r.stop.c_str() : ("setup: " + r.setup_error).c_str());
  }
  const long num_meeting = std::count_if(runs.begin(), runs.end(), [](const NoStartRun &r) {
    return MeetsEveryPassMark(r.problem, r.score);
  });
  std::printf(
      "problems meeting every threshold (params >= %.0f, rss >= %.0f, sd >= %.0f): %ld of %zu\n",
      kCertifiedDigits, kCertifiedDigits, kCertifiedSdDigits, num_meeting, runs.size());
  std::fflush(stdout);

  for (size_t k = 0; k < runs.size(); ++k) {
    const NoStartRun &r = runs[k];
    const NistProblem &p = problems[k];
    INFO("NIST StRD problem " << r.problem << " from no start: " << r.num_starts << " starts, "
                              << r.num_converged << " converged, " << r.num_basins
                              << " basins, stop " << r.stop << " (" << r.message << "), rss "
                              << RoundTrip(r.score.rss) << " vs certified "
                              << RoundTrip(p.certified_rss));
    INFO("setup error: " << r.setup_error);
    REQUIRE(r.is_set_up);
    CheckNistScore(r.problem, r.score);
  }
}

}  // namespace
}  // namespace certification
}  // namespace foothold
