// Certification against NIST's Statistical Reference Datasets (StRD), nonlinear regression:
// 27 problems with certified parameters, standard deviations and residual sums of squares,
// published by NIST ITL at https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml and stored
// unchanged in tests/data/nist-strd (see its README.md for provenance and quirks).
//
// Every problem goes through the path a user's own expression takes: the model text is parsed
// by ParseExpressionModel with the predictor columns as variables, the response (log(y) for
// Nelson) is computed by EvaluateColumnExpression, the fit is MinimizeLevenbergMarquardt with
// default options from NIST's Start 1 and Start 2, and the standard deviations come from
// ComputeFitStatistics with default options (no sigma: covariance scaled by rss / dof, which
// is how NIST's certified standard deviations are defined).

#include "tests/certification/nist_strd.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/expression_model.h"
#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"
#include "engine/stats/fit_statistics.h"
#include "tests/certification/certification_support.h"
#include "tests/certification/nist_checks.h"

namespace foothold {
namespace certification {
namespace {

// The model evaluated at the certified values reproduces the certified RSS to 10.0 to 12.7
// digits in float64 (README.md, "Checks done"); an evaluation order different from NIST's
// may lose a digit, so 9 is required of the expression model.
constexpr double kRssAtCertifiedDigits = 9.0;

struct Run {
  std::string problem;
  std::string difficulty;
  int start = 0;
  bool is_set_up = false;  // model parsed and data built
  std::string setup_error;
  std::string termination = "-";
  std::string message;
  int num_iterations = 0;
  int num_evaluations = 0;
  Eigen::VectorXd parameters;
  Eigen::VectorXd standard_errors;
  NistScore score;
  int worst_param = -1;
  int worst_sd = -1;
};

Run FitFromStart(const NistProblem& p, int start_number) {
  Run run;
  run.problem = p.name;
  run.difficulty = p.difficulty;
  run.start = start_number;

  NistFit fit;
  if (!SetUpNistFit(p, &fit, &run.setup_error)) return run;
  run.is_set_up = true;
  const Problem& problem = fit.problem;

  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, NistStart(p, start_number), LevenbergMarquardtOptions{});
  const FitStatistics statistics = ComputeFitStatistics(problem, summary.parameters);

  run.termination = ToString(summary.termination);
  run.message = summary.message;
  run.num_iterations = summary.num_iterations;
  run.num_evaluations = summary.num_evaluations;
  run.score.rss = summary.final_cost;
  run.parameters = summary.parameters;
  run.standard_errors = statistics.standard_errors;

  NistScore& score = run.score;
  score.min_param_lre = kMaxLre;
  score.min_sd_lre = kMaxLre;
  for (int j = 0; j < p.num_params; ++j) {
    const double lre = j < run.parameters.size() ? Lre(run.parameters[j], p.certified[j]) : 0;
    if (lre < score.min_param_lre || run.worst_param < 0) {
      score.min_param_lre = lre;
      run.worst_param = j;
    }
    const double sd_lre =
        j < run.standard_errors.size() ? Lre(run.standard_errors[j], p.certified_sd[j]) : 0;
    if (sd_lre < score.min_sd_lre || run.worst_sd < 0) {
      score.min_sd_lre = sd_lre;
      run.worst_sd = j;
    }
  }
  score.rss_lre = Lre(score.rss, p.certified_rss);
  score.min_sd_lre_at_certified_rss = kMaxLre;
  const double rescale = std::sqrt(p.certified_rss / score.rss);
  for (int j = 0; j < p.num_params && j < run.standard_errors.size(); ++j) {
    score.min_sd_lre_at_certified_rss =
        std::min(score.min_sd_lre_at_certified_rss,
                 Lre(run.standard_errors[j] * rescale, p.certified_sd[j]));
  }
  return run;
}

void PrintTable(const std::vector<Run>& runs) {
  std::printf(
      "\nNIST StRD nonlinear regression, expression model + Levenberg-Marquardt"
      " (default options)\n");
  std::printf("%-9s %5s %-7s %5s %5s %7s %7s %7s  %s\n", "problem", "start", "diff.", "iter",
              "evals", "LRE(b)", "LRE(rss)", "LRE(sd)", "termination");
  for (const Run& r : runs) {
    std::printf("%-9s %5d %-7s %5d %5d %7.1f %8.1f %7.1f  %s\n", r.problem.c_str(), r.start,
                r.difficulty.c_str(), r.num_iterations, r.num_evaluations, r.score.min_param_lre,
                r.score.rss_lre, r.score.min_sd_lre,
                r.is_set_up ? r.termination.c_str() : ("setup: " + r.setup_error).c_str());
  }
  int num_all_pass = 0;
  for (const Run& r : runs) num_all_pass += MeetsEveryPassMark(r.problem, r.score) ? 1 : 0;
  std::printf(
      "runs meeting every threshold (params >= %.0f, rss >= %.0f, sd >= %.0f): %d of %zu\n\n",
      kCertifiedDigits, kCertifiedDigits, kCertifiedSdDigits, num_all_pass, runs.size());
  std::fflush(stdout);
}

// All 54 runs, computed once per process and printed once.
const std::vector<Run>& AllRuns() {
  static const std::vector<Run> runs = [] {
    std::vector<Run> all;
    for (const NistProblem& p : NistProblems()) {
      all.push_back(FitFromStart(p, 1));
      all.push_back(FitFromStart(p, 2));
    }
    PrintTable(all);
    return all;
  }();
  return runs;
}

TEST_CASE("NIST StRD: index.json agrees with the 27 .dat files", "[certification][nist]") {
  const std::vector<NistProblem>& problems = NistProblems();
  REQUIRE(problems.size() == 27);
  for (const NistProblem& p : problems) {
    INFO("NIST StRD problem " << p.name << " (" << p.file << ")");
    CHECK(p.table.rows() == p.num_obs);
    CHECK(p.declared_observations == p.num_obs);
    CHECK(p.dof == p.num_obs - p.num_params);
    std::vector<std::string> expected_columns = {"y"};
    expected_columns.insert(expected_columns.end(), p.predictors.begin(), p.predictors.end());
    CHECK(p.data_columns == expected_columns);
    REQUIRE(static_cast<int>(p.parameter_lines.size()) == p.num_params);
    REQUIRE(static_cast<int>(p.start1.size()) == p.num_params);
    REQUIRE(static_cast<int>(p.start2.size()) == p.num_params);
    REQUIRE(static_cast<int>(p.certified.size()) == p.num_params);
    REQUIRE(static_cast<int>(p.certified_sd.size()) == p.num_params);
    for (int j = 0; j < p.num_params; ++j) {
      const NistParameterLine& line = p.parameter_lines[j];
      INFO("parameter b" << j + 1);
      CHECK(line.index == j + 1);
      CHECK(line.start1 == p.start1[j]);
      CHECK(line.start2 == p.start2[j]);
      CHECK(line.certified == p.certified[j]);
      CHECK(line.certified_sd == p.certified_sd[j]);
    }
  }
}

TEST_CASE("NIST StRD: the expression model reproduces the certified RSS at the certified values",
          "[certification][nist]") {
  for (const NistProblem& p : NistProblems()) {
    INFO("NIST StRD problem " << p.name << ", model " << p.model);
    std::string error;
    std::unique_ptr<ExpressionModel> model = ParseExpressionModel(
        p.model, p.predictors, p.ParameterNames(), ExpressionOptions{}, &error);
    INFO("parse error: " << error);
    REQUIRE(model != nullptr);
    const Model& base = *model;
    CHECK(base.ParameterNames() == p.ParameterNames());
    CHECK(base.PredictorNames() == p.predictors);
    Dataset data;
    const bool is_built = BuildNistDataset(p, &data, &error);
    INFO("dataset error: " << error);
    REQUIRE(is_built);
    Eigen::VectorXd values = Eigen::VectorXd::Constant(data.NumPoints(), std::nan(""));
    base.Evaluate(data.predictors, p.certified.data(), values.data());
    const double rss = (data.response - values).squaredNorm();
    INFO("rss at certified values " << RoundTrip(rss) << ", certified "
                                    << RoundTrip(p.certified_rss));
    if (p.name == "Lanczos1") {
      CHECK(rss < kLanczos1RssCeiling);
    } else {
      CHECK(Lre(rss, p.certified_rss) >= kRssAtCertifiedDigits);
    }
  }
}

TEST_CASE("NIST StRD: Levenberg-Marquardt from Start 1 and Start 2 reaches the certified values",
          "[certification][nist]") {
  const std::vector<Run>& runs = AllRuns();
  REQUIRE(runs.size() == 54);
  for (const Run& r : runs) {
    const NistProblem& p = FindNistProblem(r.problem);
    INFO("NIST StRD problem " << r.problem << " from Start " << r.start << ": termination "
                              << r.termination << " (" << r.message << "), " << r.num_iterations
                              << " iterations, rss " << RoundTrip(r.score.rss) << " vs certified "
                              << RoundTrip(p.certified_rss));
    INFO("setup error: " << r.setup_error);
    REQUIRE(r.is_set_up);
    std::string worst_param_text;
    if (r.worst_param >= 0 && r.worst_param < r.parameters.size()) {
      worst_param_text = "b" + std::to_string(r.worst_param + 1) + " = " +
                         RoundTrip(r.parameters[r.worst_param]) + " vs certified " +
                         RoundTrip(p.certified[r.worst_param]);
    }
    std::string worst_sd_text;
    if (r.worst_sd >= 0 && r.worst_sd < r.standard_errors.size()) {
      worst_sd_text = "sd(b" + std::to_string(r.worst_sd + 1) +
                      ") = " + RoundTrip(r.standard_errors[r.worst_sd]) + " vs certified " +
                      RoundTrip(p.certified_sd[r.worst_sd]);
    }
    INFO("worst parameter " << worst_param_text << "; worst standard deviation " << worst_sd_text);
    CheckNistScore(r.problem, r.score);
  }
}

}  // namespace
}  // namespace certification
}  // namespace foothold
