// GuessFamily dispatches a catalogue family to its guesser; ResolveAutoPeaks chooses the
// number of peaks by AICc over a few local fits per count.

#include <algorithm>
#include <cmath>
#include <limits>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/stats/fit_statistics.h"
#include "heuristics/families/guess_families.h"
#include "heuristics/guess.h"
#include "heuristics/internal/dataset_check.h"
#include "heuristics/signal/peaks.h"

namespace foothold {
namespace {

// ResolveAutoPeaks tries at most this many peaks, and at most one more than it detects.
constexpr int kMaxAutoPeaks = 8;
// Local fits per peak count, from the best guess candidates.
constexpr int kFitsPerCount = 3;

bool Fail(std::string* error, const std::string& message) {
  if (error != nullptr) *error = message;
  return false;
}

bool Dispatch(const guess::GuessContext& context, std::string* error) {
  const std::string& name = context.request->name;
  if (name == "line" || name == "polynomial") return guess::GuessPolynomialFamily(context, error);
  if (name == "gaussian" || name == "lorentzian" || name == "pseudo_voigt" ||
      name == "multi_gaussian" || name == "multi_lorentzian") {
    return guess::GuessPeakFamily(context, error);
  }
  if (name == "exp_decay" || name == "biexp_decay" || name == "stretched_exp") {
    return guess::GuessDecayFamily(context, error);
  }
  if (name == "logistic4" || name == "logistic5" || name == "michaelis_menten" ||
      name == "hill_binding") {
    return guess::GuessDoseResponseFamily(context, error);
  }
  if (name == "sine" || name == "damped_sine") return guess::GuessOscillationFamily(context, error);
  if (name == "power_law" || name == "gompertz" || name == "arrhenius") {
    return guess::GuessGrowthFamily(context, error);
  }
  return Fail(error, "family '" + name + "' has no guesser");
}

}  // namespace

namespace guess {

std::vector<int> FamilyLinearParameters(const FamilyRequest& request, const Model& model) {
  const std::string& name = request.name;
  const int p = model.NumParameters();
  if (name == "line" || name == "polynomial") {
    std::vector<int> all(p);
    for (int j = 0; j < p; ++j) all[j] = j;
    return all;
  }
  if (name == "multi_gaussian" || name == "multi_lorentzian") return model.LinearParameters();
  // Amplitude-like parameters and the additive baseline (the last parameter) where present.
  if (name == "gaussian" || name == "lorentzian" || name == "pseudo_voigt" || name == "exp_decay" ||
      name == "stretched_exp" || name == "sine" || name == "damped_sine") {
    return {0, p - 1};
  }
  if (name == "biexp_decay") return {0, 2, 4};
  if (name == "logistic4" || name == "logistic5") return {0, 1};
  return {0};  // michaelis_menten, hill_binding, power_law, gompertz, arrhenius
}

}  // namespace guess

bool GuessFamily(const FamilyRequest& request, const Model& model, const Dataset& data,
                 const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                 const GuessOptions& options, GuessResult* out, std::string* error) {
  std::string message;
  if (!options.Validate(&message)) return Fail(error, "guess options: " + message);
  if (!internal::ValidateDataset(data, &message)) return Fail(error, message);
  FamilyInstance instance;
  if (!InstantiateFamily(request, &instance, &message)) return Fail(error, message);
  if (instance.model->NumParameters() != model.NumParameters()) {
    return Fail(error, request.name + ": the model has " + std::to_string(model.NumParameters()) +
                           " parameters, the request's family " +
                           std::to_string(instance.model->NumParameters()));
  }
  Eigen::VectorXd lo, hi;
  if (!guess::IntersectBounds(model, instance, lower, upper, &lo, &hi, error)) return false;
  guess::Curve curve;
  if (!guess::PrepareCurve(data, request.name, std::max(model.NumParameters(), 2), &curve, error)) {
    return false;
  }
  guess::CandidateSet set(model, data, lo, hi, guess::FamilyLinearParameters(request, model));
  set.SetCurve(&curve);
  guess::GuessContext context;
  context.request = &request;
  context.curve = &curve;
  context.set = &set;
  if (!Dispatch(context, error)) return false;
  if (curve.IsConstant() && curve.y_min == 0) {
    set.Warn("every response is 0: the guess is flat and the fit cannot locate any feature");
  }
  return set.Finish(request.name, options, out, error);
}

bool ResolveAutoPeaks(const Dataset& data, FamilyRequest* request, std::string* error) {
  if (request->name != "multi_gaussian" && request->name != "multi_lorentzian") {
    return Fail(error, "peaks = auto: family '" + request->name +
                           "' has no peak count (multi_gaussian and multi_lorentzian do)");
  }
  std::string message;
  if (!internal::ValidateDataset(data, &message)) return Fail(error, message);
  guess::Curve curve;
  if (!guess::PrepareCurve(data, request->name, 4, &curve, error)) return false;
  int num_detected = 0;
  if (!curve.IsConstant()) {
    num_detected = static_cast<int>(signal::FindPeaks(curve.x, curve.y).peaks.size());
  }
  // Each count k needs 3k + 1 parameters and AICc needs n - (3k + 2) - 1 > 0.
  const int by_points = (curve.num_input_points - 4) / 3;
  const int max_peaks = std::min({kMaxAutoPeaks, num_detected + 1, by_points});
  if (max_peaks < 1) {
    return Fail(error, "peaks = auto: " + std::to_string(curve.num_input_points) +
                           " points are too few to compare even one peak by AICc (need >= 7)");
  }
  int best_count = 0;
  double best_aicc = std::numeric_limits<double>::infinity();
  for (int k = 1; k <= max_peaks; ++k) {
    FamilyRequest trial = *request;
    trial.peaks = k;
    trial.auto_peaks = false;
    FamilyInstance instance;
    if (!InstantiateFamily(trial, &instance, &message)) return Fail(error, message);
    Problem problem;
    problem.model = instance.model.get();
    if (!data.SelectPredictors(instance.model->PredictorNames(), &problem.data, &message)) {
      return Fail(error, message);
    }
    GuessResult guess;
    if (!GuessFamily(trial, *instance.model, data, Eigen::VectorXd(), Eigen::VectorXd(),
                     GuessOptions(), &guess, &message)) {
      continue;
    }
    problem.lower = guess.lower;
    problem.upper = guess.upper;
    double best_cost = std::numeric_limits<double>::infinity();
    Eigen::VectorXd best_end;
    const int num_fits = std::min<int>(kFitsPerCount, guess.candidates.size());
    for (int c = 0; c < num_fits; ++c) {
      const LocalFitSummary fit = MinimizeLevenbergMarquardt(
          problem, guess.candidates[c].parameters, LevenbergMarquardtOptions());
      if (std::isfinite(fit.final_cost) && fit.final_cost < best_cost) {
        best_cost = fit.final_cost;
        best_end = fit.parameters;
      }
    }
    if (best_end.size() == 0) continue;
    const FitStatistics statistics = ComputeFitStatistics(problem, best_end);
    if (std::isfinite(statistics.aicc) && statistics.aicc < best_aicc) {
      best_aicc = statistics.aicc;
      best_count = k;
    }
  }
  if (best_count == 0) {
    return Fail(error, "peaks = auto: no peak count from 1 to " + std::to_string(max_peaks) +
                           " gave a finite fit to compare");
  }
  request->peaks = best_count;
  request->auto_peaks = false;
  return true;
}

}  // namespace foothold
