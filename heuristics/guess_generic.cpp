// GuessGeneric: starting guesses for an arbitrary model (usually an expression). The
// parameters that enter linearly are solved by linear least squares (variable projection)
// for each sampled value of the others; those are sampled on a deterministic design built
// from the data scales and the bounds; the best design points are polished by a few
// Levenberg–Marquardt iterations. docs/generic-guesser.md describes the choices.

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <memory>
#include <set>
#include <sstream>

#include "engine/solve/local_fit.h"
#include "engine/solve/variable_projection.h"
#include "heuristics/guess.h"
#include "heuristics/internal/dataset_check.h"
#include "heuristics/internal/generic_design.h"
#include "heuristics/internal/generic_locations.h"

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// Design points evaluated (each one model evaluation and one small QR).
constexpr int kDesignBudget = 1024;
// Best design points refined by coordinate sweeps, and the sweeps over the grid.
constexpr int kNumSwept = 4;
constexpr int kNumSweeps = 3;
// Evaluations all sweeps together may spend, so that models with many parameters stay cheap.
constexpr int kSweepBudget = 8192;
// Best distinct design points polished, and the iterations each polish may take.
constexpr int kNumPolished = 6;
constexpr int kPolishIterations = 40;
// Candidates closer than this in rss (relative) and in every parameter are one candidate.
constexpr double kDuplicateTolerance = 1e-6;
// A positive bounded parameter whose range spans more than this ratio is log-scaled.
constexpr double kLogSpanRatio = 100;
// Peak-seeded design: best points probed for location parameters, peak positions used,
// assignments of positions to locations tried, design points per assignment, and the
// evaluations the sweeps of the seeded points may spend together.
constexpr int kNumLocationProbes = 8;
constexpr int kMaxSeedCenters = 5;
constexpr int kMaxAssignments = 24;
constexpr int kSeededDesignBudget = 128;
constexpr int kSeededSweepBudget = 8192;
// Rounds of the peak-seeded design, and the best seeded points whose residual peaks feed the
// next round.
constexpr int kNumSeedRounds = 3;
constexpr int kNumResidualProbes = 2;
// Width levels added per peak, as shares of its FWHM: a gaussian's sigma (1 / (2 sqrt(2 ln 2)))
// and the w of exp(-(x-c)^2/w^2) (1 / (2 sqrt(ln 2))).
constexpr double kWidthsPerFwhm[] = {0.42466, 0.60056};

bool Fail(std::string* error, const std::string& message) {
  if (error != nullptr) *error = message;
  return false;
}

// Rejects what no guess can work with: invalid options, data, bounds; too few points;
// predictors that never vary.
bool ValidateInputs(const Model& model, const Dataset& data, const Eigen::VectorXd& lower,
                    const Eigen::VectorXd& upper, const GuessOptions& options, Dataset* selected,
                    std::string* error) {
  const int p = model.NumParameters();
  const auto& names = model.ParameterNames();
  if (!options.Validate(error)) return false;
  if (!internal::ValidateDataset(data, error)) return false;
  if (!data.SelectPredictors(model.PredictorNames(), selected, error)) return false;
  if (lower.size() != 0 && lower.size() != p) {
    return Fail(error, "lower bounds have " + std::to_string(lower.size()) + " entries, expected " +
                           std::to_string(p));
  }
  if (upper.size() != 0 && upper.size() != p) {
    return Fail(error, "upper bounds have " + std::to_string(upper.size()) + " entries, expected " +
                           std::to_string(p));
  }
  for (int j = 0; j < p; ++j) {
    const double lo = lower.size() ? lower[j] : -kInf;
    const double hi = upper.size() ? upper[j] : kInf;
    if (std::isnan(lo) || std::isnan(hi))
      return Fail(error, "bounds of '" + names[j] + "' are not numbers");
    if (lo > hi) {
      std::ostringstream message;
      message << "bounds of '" << names[j] << "': lower " << lo << " > upper " << hi;
      return Fail(error, message.str());
    }
  }
  if (selected->NumPoints() < p) {
    return Fail(error, std::to_string(selected->NumPoints()) + " data points but " +
                           std::to_string(p) +
                           " parameters: need at least as many points as parameters");
  }
  bool any_varies = selected->predictors.cols() == 0;
  for (Eigen::Index c = 0; c < selected->predictors.cols(); ++c) {
    const auto column = selected->predictors.col(c);
    any_varies = any_varies || column.maxCoeff() > column.minCoeff();
  }
  if (!any_varies) {
    std::ostringstream message;
    message << "predictor '" << selected->predictor_names[0] << "' is constant (every value "
            << selected->predictors(0, 0) << "): the parameters cannot be told apart";
    return Fail(error, message.str());
  }
  return true;
}

generic::DataScales ComputeScales(const Dataset& data) {
  generic::DataScales scales;
  double x_scale = 0;
  for (Eigen::Index c = 0; c < data.predictors.cols(); ++c) {
    const auto column = data.predictors.col(c);
    x_scale =
        std::max({x_scale, column.maxCoeff() - column.minCoeff(), column.cwiseAbs().maxCoeff()});
  }
  if (data.predictors.cols() > 0) {
    scales.x_min = data.predictors.col(0).minCoeff();
    scales.x_max = data.predictors.col(0).maxCoeff();
  }
  const auto& y = data.response;
  const double y_scale = std::max(y.maxCoeff() - y.minCoeff(), y.cwiseAbs().maxCoeff());
  scales.x_scale = x_scale > 0 ? x_scale : 1;
  scales.y_scale = y_scale > 0 ? y_scale : 1;
  const double candidates[] = {1.0, scales.x_scale, 1 / scales.x_scale, scales.y_scale,
                               1 / scales.y_scale};
  scales.min_scale = *std::min_element(std::begin(candidates), std::end(candidates));
  scales.max_scale = *std::max_element(std::begin(candidates), std::end(candidates));
  return scales;
}

// Cost of a sampled point: the projected rss when linear parameters are solved, else the
// plain rss. Full() returns the whole parameter vector.
class SampleEvaluator {
 public:
  explicit SampleEvaluator(const Problem& problem) : problem_(problem) {
    split_ = SplitForProjection(problem);
    if (split_.Applies()) {
      projected_ = std::make_unique<ProjectedModel>(problem, split_,
                                                    Eigen::VectorXd::Zero(problem.NumParameters()));
      reduced_ = MakeProjectedProblem(problem, *projected_);
    } else {
      split_.linear.clear();
      split_.nonlinear.clear();
      for (int j = 0; j < problem.NumParameters(); ++j) split_.nonlinear.push_back(j);
    }
    values_.resize(problem.data.NumPoints());
    weights_ = problem.data.HasSigma() ? problem.data.sigma.cwiseInverse().eval()
                                       : Eigen::VectorXd::Ones(problem.data.NumPoints()).eval();
  }

  bool IsProjected() const { return projected_ != nullptr; }
  const std::vector<int>& Sampled() const { return split_.nonlinear; }
  const std::vector<int>& Solved() const { return split_.linear; }

  double Cost(const Eigen::VectorXd& theta) {
    values_.setConstant(std::numeric_limits<double>::quiet_NaN());
    double cost = 0;
    if (projected_) {
      projected_->Evaluate(reduced_.data.predictors, theta.data(), values_.data());
      cost = (values_ - reduced_.data.response).squaredNorm();
    } else {
      problem_.model->Evaluate(problem_.data.predictors, theta.data(), values_.data());
      cost = (values_ - problem_.data.response).cwiseProduct(weights_).squaredNorm();
    }
    return std::isfinite(cost) ? cost : kInf;
  }

  bool Full(const Eigen::VectorXd& theta, Eigen::VectorXd* full) {
    if (!projected_) {
      *full = theta;
      return true;
    }
    return projected_->Expand(theta.data(), full) && full->allFinite();
  }

 private:
  const Problem& problem_;
  ProjectionSplit split_;
  std::unique_ptr<ProjectedModel> projected_;
  Problem reduced_;
  Eigen::VectorXd values_;
  Eigen::VectorXd weights_;
};

struct Scored {
  std::vector<int> index;  // level index per sampled parameter
  Eigen::VectorXd theta;
  double rss = kInf;
  bool is_sweep = false;   // found by the coordinate sweeps
  bool is_seeded = false;  // from the peak-seeded design (locations at peak positions)
};

// Cyclic coordinate search on the level grid (each sweep tries every level of each sampled
// parameter with the others held): cheap, and it resolves parameters the design left
// coarse, such as the centers of several peaks or the periods of several cycles.
Scored Sweep(Scored point, const std::vector<std::vector<double>>& levels,
             SampleEvaluator* evaluator, int* budget) {
  for (int sweep = 0; sweep<kNumSweeps&& * budget> 0; ++sweep) {
    bool improved = false;
    for (size_t k = 0; k < levels.size(); ++k) {
      Scored trial = point;
      for (size_t l = 0; l < levels[k].size() && *budget > 0; ++l) {
        if (static_cast<int>(l) == point.index[k]) continue;
        --*budget;
        trial.index[k] = static_cast<int>(l);
        trial.theta[k] = levels[k][l];
        trial.rss = evaluator->Cost(trial.theta);
        if (trial.rss < point.rss) {
          point = trial;
          improved = true;
        }
      }
    }
    if (!improved) break;
  }
  point.is_sweep = true;
  return point;
}

// The peak-seeded design (docs/generic-guesser.md, step 4). Parameters that behave as
// locations along x are placed at the peak positions of the data and of the best point's
// residuals, in every assignment; the other sampled parameters take a small design of their
// levels, to which the peak widths are added (as gaussian sigma and as the w of
// exp(-(x-c)^2/w^2)); the best point of each assignment is swept over all levels. The
// residuals of the best seeded points then reveal peaks the first positions hid (an
// overlapped shoulder), and the assignments that use them are tried in a further round. A
// peak on a baseline is found where it is, not only where the coarse design puts a center.
std::vector<Scored> SeedLocations(const Problem& problem, const std::vector<Scored>& best,
                                  const std::vector<std::vector<double>>& base_levels,
                                  SampleEvaluator* evaluator) {
  const std::vector<int>& sampled = evaluator->Sampled();
  std::vector<Eigen::VectorXd> probes;
  for (size_t k = 0; k < best.size() && static_cast<int>(probes.size()) < kNumLocationProbes; ++k) {
    Eigen::VectorXd full;
    if (evaluator->Full(best[k].theta, &full)) probes.push_back(full);
  }
  if (probes.empty()) return {};
  const std::vector<int> locations = generic::FindLocationParameters(
      *problem.model, problem.data, sampled, evaluator->Solved(), probes);
  if (locations.empty()) return {};
  const Eigen::VectorXd& y = problem.data.response;
  auto add_residual_peaks = [&](const Eigen::VectorXd& full,
                                std::vector<generic::SeedPeak>* peaks) {
    Eigen::VectorXd fitted(problem.data.NumPoints());
    fitted.setConstant(std::numeric_limits<double>::quiet_NaN());
    problem.model->Evaluate(problem.data.predictors, full.data(), fitted.data());
    if (!fitted.allFinite()) return 0;
    return generic::AddPeakCenters(problem.data, y - fitted, kMaxSeedCenters, peaks);
  };
  std::vector<generic::SeedPeak> peaks;
  generic::AddPeakCenters(problem.data, y, kMaxSeedCenters, &peaks);
  add_residual_peaks(probes.front(), &peaks);

  // Sampled position of each location.
  std::vector<int> slot_of;
  std::vector<bool> is_location(base_levels.size(), false);
  for (int j : locations) {
    const int k = static_cast<int>(std::find(sampled.begin(), sampled.end(), j) - sampled.begin());
    slot_of.push_back(k);
    is_location[k] = true;
  }
  std::vector<Scored> seeded;
  std::set<std::vector<int>> tried;
  int sweep_budget = kSeededSweepBudget;
  for (int round = 0; round < kNumSeedRounds && !peaks.empty(); ++round) {
    // Levels of this round: locations gain every peak position, the others every width.
    std::vector<std::vector<double>> levels = base_levels;
    for (size_t k = 0; k < levels.size(); ++k) {
      const int j = sampled[k];
      for (const generic::SeedPeak& peak : peaks) {
        if (is_location[k]) {
          levels[k].push_back(std::min(std::max(peak.center, problem.Lower(j)), problem.Upper(j)));
        }
      }
      if (is_location[k]) continue;
      for (const generic::SeedPeak& peak : peaks) {
        for (double per_fwhm : kWidthsPerFwhm) {
          const double w = per_fwhm * peak.fwhm;
          if (w > 0 && w >= problem.Lower(j) && w <= problem.Upper(j)) levels[k].push_back(w);
        }
      }
    }
    std::vector<Scored> round_points;
    for (const std::vector<int>& assignment : generic::CenterAssignments(
             static_cast<int>(locations.size()), static_cast<int>(peaks.size()), kMaxAssignments)) {
      if (!tried.insert(assignment).second) continue;
      Scored fixed;
      fixed.index.assign(levels.size(), 0);
      fixed.theta.resize(static_cast<Eigen::Index>(levels.size()));
      std::vector<bool> is_fixed(levels.size(), false);
      for (size_t i = 0; i < assignment.size(); ++i) {
        if (assignment[i] < 0) continue;
        const int k = slot_of[i];
        fixed.index[k] = static_cast<int>(base_levels[k].size()) + assignment[i];
        is_fixed[k] = true;
      }
      std::vector<int> free_slots;
      std::vector<int> num_levels;
      for (size_t k = 0; k < levels.size(); ++k) {
        if (is_fixed[k]) continue;
        free_slots.push_back(static_cast<int>(k));
        num_levels.push_back(
            static_cast<int>(is_location[k] ? base_levels[k].size() : levels[k].size()));
      }
      std::vector<std::vector<int>> design = {std::vector<int>()};
      if (!free_slots.empty()) design = generic::DesignPoints(num_levels, kSeededDesignBudget);
      Scored best_point;
      for (const std::vector<int>& point : design) {
        Scored s = fixed;
        for (size_t f = 0; f < free_slots.size(); ++f) s.index[free_slots[f]] = point[f];
        for (size_t k = 0; k < levels.size(); ++k) s.theta[k] = levels[k][s.index[k]];
        s.rss = evaluator->Cost(s.theta);
        if (s.rss < best_point.rss) best_point = std::move(s);
      }
      if (!std::isfinite(best_point.rss)) continue;
      best_point.is_seeded = true;
      seeded.push_back(best_point);
      round_points.push_back(sweep_budget > 0 ? Sweep(best_point, levels, evaluator, &sweep_budget)
                                              : best_point);
    }
    std::stable_sort(round_points.begin(), round_points.end(),
                     [](const Scored& a, const Scored& b) { return a.rss < b.rss; });
    int num_new = 0;
    for (size_t k = 0; k < round_points.size() && static_cast<int>(k) < kNumResidualProbes; ++k) {
      Eigen::VectorXd full;
      if (evaluator->Full(round_points[k].theta, &full))
        num_new += add_residual_peaks(full, &peaks);
    }
    for (Scored& s : round_points) seeded.push_back(std::move(s));
    if (num_new == 0) break;
  }
  return seeded;
}

bool IsDuplicate(const GuessCandidate& a, const GuessCandidate& b) {
  const double scale = std::max({std::abs(a.rss), std::abs(b.rss), 1e-300});
  if (std::abs(a.rss - b.rss) > kDuplicateTolerance * scale) return false;
  for (Eigen::Index j = 0; j < a.parameters.size(); ++j) {
    const double s = std::max({std::abs(a.parameters[j]), std::abs(b.parameters[j]), 1e-300});
    if (std::abs(a.parameters[j] - b.parameters[j]) > kDuplicateTolerance * s) return false;
  }
  return true;
}

std::string Numbered(const std::string& base, int k) {
  return k == 0 ? base : base + "-" + std::to_string(k + 1);
}

// Scales for the multistart box: the largest magnitude among the best candidates, else a
// data scale (y for solved linear parameters, 1 otherwise).
void FillScales(const Problem& problem, const std::vector<int>& solved,
                const generic::DataScales& scales, GuessResult* out) {
  const int p = problem.NumParameters();
  out->scale.resize(p);
  out->log_scale.assign(p, false);
  const size_t top = std::min<size_t>(3, out->candidates.size());
  for (int j = 0; j < p; ++j) {
    double s = 0;
    for (size_t c = 0; c < top; ++c) s = std::max(s, std::abs(out->candidates[c].parameters[j]));
    const bool is_solved = std::find(solved.begin(), solved.end(), j) != solved.end();
    const double lo = problem.Lower(j);
    const double hi = problem.Upper(j);
    if (!(s > 0) || !std::isfinite(s)) {
      s = std::isfinite(lo) && std::isfinite(hi) && hi > lo ? 0.5 * (hi - lo)
                                                            : (is_solved ? scales.y_scale : 1.0);
    }
    out->scale[j] = s;
    out->log_scale[j] = lo > 0 && hi > kLogSpanRatio * lo;
  }
}

// The best distinct points (design and sweeps), full-size, then polished versions of the
// best kNumPolished. Each candidate's name is its kind; Name() numbers them later.
std::vector<GuessCandidate> PolishBest(const Problem& problem, const std::vector<Scored>& scored,
                                       int max_candidates, SampleEvaluator* evaluator) {
  std::vector<GuessCandidate> grid;
  for (const Scored& s : scored) {
    if (static_cast<int>(grid.size()) >= std::max(kNumPolished, max_candidates)) break;
    GuessCandidate c;
    if (!evaluator->Full(s.theta, &c.parameters)) continue;
    c.rss = s.rss;
    c.name = s.is_seeded ? "peaks" : (s.is_sweep ? "sweep" : "grid");
    bool duplicate = false;
    for (const GuessCandidate& g : grid) duplicate = duplicate || IsDuplicate(c, g);
    if (!duplicate) grid.push_back(std::move(c));
  }
  std::vector<GuessCandidate> all;
  LocalFitOptions polish;
  polish.lm.max_iterations = kPolishIterations;
  for (size_t k = 0; k < grid.size() && static_cast<int>(k) < kNumPolished; ++k) {
    const LocalFitSummary fit = RunLocalFit(problem, grid[k].parameters, polish);
    if (fit.parameters.allFinite() && std::isfinite(fit.final_cost) &&
        fit.final_cost <= grid[k].rss && problem.IsInsideBounds(fit.parameters, nullptr)) {
      all.push_back({"polish", fit.parameters, fit.final_cost});
    }
  }
  for (GuessCandidate& g : grid) all.push_back(std::move(g));
  std::stable_sort(all.begin(), all.end(),
                   [](const GuessCandidate& a, const GuessCandidate& b) { return a.rss < b.rss; });
  return all;
}

// Keeps up to max_candidates distinct, finite candidates inside the bounds, best first, and
// numbers repeated kinds ("polish", "polish-2", ...).
void KeepCandidates(const Problem& problem, std::vector<GuessCandidate> all, int max_candidates,
                    GuessResult* out) {
  std::map<std::string, int> num_named;
  for (GuessCandidate& c : all) {
    if (static_cast<int>(out->candidates.size()) >= max_candidates) break;
    if (!c.parameters.allFinite() || !problem.IsInsideBounds(c.parameters, nullptr)) continue;
    bool duplicate = false;
    for (const GuessCandidate& kept : out->candidates) {
      duplicate = duplicate || IsDuplicate(c, kept);
    }
    if (duplicate) continue;
    c.name = Numbered(c.name, num_named[c.name]++);
    out->candidates.push_back(std::move(c));
  }
}

}  // namespace

bool GuessGeneric(const Model& model, const Dataset& data, const Eigen::VectorXd& lower,
                  const Eigen::VectorXd& upper, const GuessOptions& options, GuessResult* out,
                  std::string* error) {
  Problem problem;
  problem.model = &model;
  if (!ValidateInputs(model, data, lower, upper, options, &problem.data, error)) return false;
  const int p = model.NumParameters();
  problem.lower = lower.size() ? lower : Eigen::VectorXd::Constant(p, -kInf);
  problem.upper = upper.size() ? upper : Eigen::VectorXd::Constant(p, kInf);
  *out = GuessResult();
  out->lower = problem.lower;
  out->upper = problem.upper;
  const generic::DataScales scales = ComputeScales(problem.data);
  const auto& y = problem.data.response;
  if (y.maxCoeff() == y.minCoeff()) out->warnings.push_back("constant response");

  SampleEvaluator evaluator(problem);
  if (!evaluator.IsProjected()) {
    out->warnings.push_back(
        model.LinearParameters().empty()
            ? "no linear parameters detected: every parameter is sampled"
            : "no linear parameter can be projected: every parameter is sampled");
  }
  std::vector<std::vector<double>> levels;
  std::vector<int> num_levels;
  for (int j : evaluator.Sampled()) {
    levels.push_back(generic::ParameterLevels(problem.Lower(j), problem.Upper(j), scales));
    num_levels.push_back(static_cast<int>(levels.back().size()));
  }
  std::vector<Scored> scored;
  int num_non_finite = 0;
  for (const std::vector<int>& point : generic::DesignPoints(num_levels, kDesignBudget)) {
    Scored s;
    s.index = point;
    s.theta.resize(static_cast<Eigen::Index>(levels.size()));
    for (size_t k = 0; k < levels.size(); ++k) s.theta[k] = levels[k][point[k]];
    s.rss = evaluator.Cost(s.theta);
    if (std::isfinite(s.rss)) {
      scored.push_back(std::move(s));
    } else {
      ++num_non_finite;
    }
  }
  if (scored.empty()) {
    return Fail(error, "the model is not finite at any of the " + std::to_string(num_non_finite) +
                           " sampled points: give bounds or a start");
  }
  auto by_rss = [](const Scored& a, const Scored& b) { return a.rss < b.rss; };
  std::stable_sort(scored.begin(), scored.end(), by_rss);
  const size_t num_swept = std::min<size_t>(kNumSwept, scored.size());
  int sweep_budget = kSweepBudget;
  for (size_t k = 0; k < num_swept; ++k) {
    scored.push_back(Sweep(scored[k], levels, &evaluator, &sweep_budget));
  }
  std::stable_sort(scored.begin(), scored.end(), by_rss);
  for (Scored& s : SeedLocations(problem, scored, levels, &evaluator)) {
    scored.push_back(std::move(s));
  }
  std::stable_sort(scored.begin(), scored.end(), by_rss);

  KeepCandidates(problem, PolishBest(problem, scored, options.max_candidates, &evaluator),
                 options.max_candidates, out);
  if (out->candidates.empty()) {
    return Fail(error, "no sampled point gives finite parameters inside the bounds");
  }
  if (num_non_finite > 0) {
    out->warnings.push_back(std::to_string(num_non_finite) +
                            " sampled points gave non-finite model values and were skipped");
  }
  FillScales(problem, evaluator.Solved(), scales, out);
  return true;
}

}  // namespace foothold
