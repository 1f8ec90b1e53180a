// GuessGeneric: candidates for arbitrary expression models, and how far a single local fit
// from them gets on the NIST StRD nonlinear regression problems from no start at all.

#include <catch2/catch.hpp>
#include <cmath>
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/expression_model.h"
#include "engine/solve/local_fit.h"
#include "heuristics/guess.h"
#include "tests/certification/certification_support.h"
#include "tests/certification/nist_strd.h"
#include "tests/certification/nist_symmetries.h"

namespace foothold {
namespace {

// NIST StRD pass mark: log relative error >= 6 on every parameter.
constexpr double kCertifiedDigits = 6;
// Problems (of 27) a single RunLocalFit from the best candidate solves: all of them since the
// peak-seeded design solved Gauss2 and Gauss3 (measured 2026-12-02; the least margin is ENSO
// at LRE 6.57; the test prints every problem's figure).
constexpr int kSolvedFromBestCandidate = 27;
// Relative rss agreement for a fit that reaches the generating truth on clean data.
constexpr double kFitTolerance = 1e-6;

std::unique_ptr<ExpressionModel> Parse(const std::string& text) {
  std::string error;
  std::unique_ptr<ExpressionModel> model =
      ParseExpressionModel(text, {"x"}, {}, ExpressionOptions(), &error);
  INFO(error);
  REQUIRE(model);
  return model;
}

Dataset MakeData(const Model& model, const std::vector<double>& truth, double x0, double x1, int n,
                 double noise) {
  Dataset data;
  data.predictor_names = {"x"};
  data.predictors.resize(n, 1);
  for (int i = 0; i < n; ++i) data.predictors(i, 0) = x0 + (x1 - x0) * i / (n - 1);
  data.response.resize(n);
  model.Evaluate(data.predictors, truth.data(), data.response.data());
  certification::SeededNormal normal(17);
  for (int i = 0; i < n; ++i) data.response[i] += noise * normal.Normal();
  return data;
}

void CheckWellFormed(const GuessResult& guess, int p) {
  REQUIRE_FALSE(guess.candidates.empty());
  REQUIRE(guess.lower.size() == p);
  REQUIRE(guess.upper.size() == p);
  REQUIRE(guess.scale.size() == p);
  REQUIRE(guess.log_scale.size() == static_cast<size_t>(p));
  for (size_t c = 0; c < guess.candidates.size(); ++c) {
    const GuessCandidate& candidate = guess.candidates[c];
    INFO("candidate " << candidate.name);
    CHECK(candidate.parameters.size() == p);
    CHECK(candidate.parameters.allFinite());
    CHECK(std::isfinite(candidate.rss));
    CHECK((candidate.parameters.array() >= guess.lower.array()).all());
    CHECK((candidate.parameters.array() <= guess.upper.array()).all());
    if (c > 0) CHECK(candidate.rss >= guess.candidates[c - 1].rss);
  }
  CHECK((guess.scale.array() > 0).all());
  CHECK(guess.scale.allFinite());
}

TEST_CASE("GuessGeneric: linear parameters are solved, so the best candidate fits the data",
          "[heuristics]") {
  // a and c enter linearly; only the rate k is sampled.
  auto model = Parse("a*exp(-k*x) + c");
  const Dataset data = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 50, 0.0);
  GuessResult guess;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, {}, {}, GuessOptions(), &guess, &error));
  CheckWellFormed(guess, 3);
  const GuessCandidate& best = guess.candidates[0];
  CHECK(best.name == "polish");
  CHECK(std::abs(best.parameters[1] - 0.37) <= kFitTolerance);
  CHECK(std::abs(best.parameters[0] - 4.0) <= kFitTolerance * 4);
  CHECK(best.rss <= kFitTolerance);
  bool has_grid = false;
  for (const GuessCandidate& c : guess.candidates)
    has_grid = has_grid || c.name.rfind("grid", 0) == 0;
  CHECK(has_grid);
  for (const std::string& w : guess.warnings)
    CHECK(w.find("every parameter is sampled") == std::string::npos);
}

TEST_CASE("GuessGeneric: a model without linear parameters is sampled whole and warns",
          "[heuristics]") {
  auto model = Parse("exp(-k*x)/(1 + m*x)");
  const Dataset data = MakeData(*model, {0.8, 2.0}, 0, 5, 40, 0.0);
  GuessResult guess;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, {}, {}, GuessOptions(), &guess, &error));
  CheckWellFormed(guess, 2);
  bool warned = false;
  for (const std::string& w : guess.warnings)
    warned = warned || w.find("no linear parameters") == 0;
  CHECK(warned);
  CHECK(std::abs(guess.candidates[0].parameters[0] - 0.8) <= 1e-4);
}

TEST_CASE("GuessGeneric: every candidate respects the bounds", "[heuristics]") {
  auto model = Parse("h*exp(-(x-m)^2/(2*s^2)) + b");
  const Dataset data = MakeData(*model, {3.0, 1.0, 0.5, 0.2}, -4, 4, 80, 0.01);
  Eigen::VectorXd lower(4), upper(4);
  lower << 0, -1, 0.6, -INFINITY;  // the true s = 0.5 lies outside: candidates must not
  upper << 10, 0.5, 3, INFINITY;   // the true m = 1 lies outside as well
  GuessResult guess;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, lower, upper, GuessOptions(), &guess, &error));
  CheckWellFormed(guess, 4);
  CHECK(guess.lower == lower);
  CHECK(guess.upper == upper);
  for (const GuessCandidate& c : guess.candidates) {
    CHECK(c.parameters[2] >= 0.6);
    CHECK(c.parameters[1] <= 0.5);
  }
  // h is bounded, so only b is projected; s spans less than two decades: linear box.
  CHECK_FALSE(guess.log_scale[2]);
}

TEST_CASE("GuessGeneric: max_candidates limits the list", "[heuristics]") {
  auto model = Parse("a*exp(-k*x) + c");
  const Dataset data = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 50, 0.05);
  GuessOptions options;
  options.max_candidates = 2;
  GuessResult guess;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, {}, {}, options, &guess, &error));
  CHECK(guess.candidates.size() <= 2);
  options.max_candidates = 0;
  CHECK_FALSE(GuessGeneric(*model, data, {}, {}, options, &guess, &error));
  CHECK(error == "max_candidates = 0: must be >= 1");
}

TEST_CASE("GuessGeneric: degenerate data and bad bounds give a clear error", "[heuristics]") {
  auto model = Parse("a*exp(-k*x) + c");
  GuessResult guess;
  std::string error;

  Dataset constant_x = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 20, 0.0);
  constant_x.predictors.setConstant(3.0);
  CHECK_FALSE(GuessGeneric(*model, constant_x, {}, {}, GuessOptions(), &guess, &error));
  CHECK(error == "predictor 'x' is constant (every value 3): the parameters cannot be told apart");

  const Dataset two_points = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 2, 0.0);
  CHECK_FALSE(GuessGeneric(*model, two_points, {}, {}, GuessOptions(), &guess, &error));
  CHECK(error == "2 data points but 3 parameters: need at least as many points as parameters");

  Dataset with_nan = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 20, 0.0);
  with_nan.response[4] = NAN;
  CHECK_FALSE(GuessGeneric(*model, with_nan, {}, {}, GuessOptions(), &guess, &error));
  CHECK_FALSE(error.empty());

  const Dataset data = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 20, 0.0);
  Eigen::VectorXd lower = Eigen::VectorXd::Zero(3), upper = Eigen::VectorXd::Ones(3);
  lower[1] = 2;
  CHECK_FALSE(GuessGeneric(*model, data, lower, upper, GuessOptions(), &guess, &error));
  CHECK(error == "bounds of 'k': lower 2 > upper 1");
  CHECK_FALSE(
      GuessGeneric(*model, data, Eigen::VectorXd::Zero(2), {}, GuessOptions(), &guess, &error));
  CHECK(error == "lower bounds have 2 entries, expected 3");

  // A model that is nowhere finite on these data: log of a negative number everywhere.
  auto broken = Parse("a*log(-1 - k*k - x*x)");
  CHECK_FALSE(GuessGeneric(*broken, data, {}, {}, GuessOptions(), &guess, &error));
  CHECK(error.find("the model is not finite at any of the") == 0);
}

TEST_CASE("GuessGeneric: a constant response is guessed and flagged", "[heuristics]") {
  auto model = Parse("a*exp(-k*x) + c");
  Dataset data = MakeData(*model, {4.0, 0.37, 1.5}, 0, 10, 20, 0.0);
  data.response.setConstant(2.0);
  GuessResult guess;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, {}, {}, GuessOptions(), &guess, &error));
  CheckWellFormed(guess, 3);
  CHECK(guess.warnings.front() == "constant response");
  CHECK(guess.candidates[0].rss <= 1e-12);
}

TEST_CASE("GuessGeneric: the same input gives the same candidates", "[heuristics]") {
  auto model = Parse("a*exp(-k*x) + b*exp(-m*x)");
  const Dataset data = MakeData(*model, {2.0, 0.3, 1.0, 2.5}, 0, 10, 60, 0.01);
  GuessResult first, second;
  std::string error;
  REQUIRE(GuessGeneric(*model, data, {}, {}, GuessOptions(), &first, &error));
  REQUIRE(GuessGeneric(*model, data, {}, {}, GuessOptions(), &second, &error));
  REQUIRE(first.candidates.size() == second.candidates.size());
  for (size_t c = 0; c < first.candidates.size(); ++c) {
    CHECK(first.candidates[c].name == second.candidates[c].name);
    CHECK(first.candidates[c].parameters == second.candidates[c].parameters);
  }
}

// NIST StRD nonlinear regression, all 27 problems (tests/data/nist-strd, certified values
// in index.json), from no start: only the expression and the data go to GuessGeneric, and
// one RunLocalFit runs from its best candidate.
TEST_CASE("GuessGeneric: NIST StRD from no start, one local fit from the best candidate",
          "[heuristics]") {
  std::vector<certification::NistProblem> problems;
  std::string error;
  REQUIRE(certification::LoadNistProblems(FOOTHOLD_NIST_DIR, &problems, &error));
  REQUIRE(problems.size() == 27);
  int num_solved = 0;
  int num_solved_by_any = 0;
  for (const certification::NistProblem& nist : problems) {
    std::unique_ptr<Model> model(ParseExpressionModel(
        nist.model, nist.predictors, nist.ParameterNames(), ExpressionOptions(), &error));
    REQUIRE(model);
    Problem problem;
    problem.model = model.get();
    REQUIRE(certification::BuildNistDataset(nist, &problem.data, &error));
    GuessResult guess;
    INFO(nist.name);
    REQUIRE(GuessGeneric(*model, problem.data, {}, {}, GuessOptions(), &guess, &error));
    CheckWellFormed(guess, nist.num_params);
    double first = 0, best = 0;
    for (size_t c = 0; c < guess.candidates.size(); ++c) {
      const LocalFitSummary fit = RunLocalFit(problem, guess.candidates[c].parameters, {});
      const double lre =
          certification::MinLreModuloSymmetry(nist.name, fit.parameters, nist.certified);
      if (c == 0) first = lre;
      best = std::max(best, lre);
    }
    std::cout << nist.name << ": min LRE " << first << " from the best candidate, " << best
              << " from the best of " << guess.candidates.size() << "\n";
    num_solved += first >= kCertifiedDigits ? 1 : 0;
    num_solved_by_any += best >= kCertifiedDigits ? 1 : 0;
  }
  std::cout << "NIST StRD from no start: " << num_solved << " of 27 from the best candidate, "
            << num_solved_by_any << " from the best of all candidates\n";
  CHECK(num_solved >= kSolvedFromBestCandidate);
  CHECK(num_solved_by_any >= num_solved);
}

}  // namespace
}  // namespace foothold
