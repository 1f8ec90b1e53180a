// Profiles over the nonlinear parameters of a family, with the linear ones solved at each
// point: grids, a compass search, and the one-exponential profile the decays share.

#include "heuristics/families/guess_profile.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace foothold {
namespace guess {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

}  // namespace

bool BestOnCurve(const CandidateSet& set, const Curve& curve,
                 const std::vector<Eigen::VectorXd>& starts, Eigen::VectorXd* best) {
  double best_rss = kInf;
  for (const Eigen::VectorXd& start : starts) {
    if (start.size() != set.NumParameters() || !start.allFinite()) continue;
    Eigen::VectorXd candidate = start;
    const double rss = set.RefineLinear(&candidate, &curve);
    if (rss < best_rss && candidate.allFinite()) {
      best_rss = rss;
      *best = candidate;
    }
  }
  return std::isfinite(best_rss);
}

void PolishProfile(const CandidateSet& set, const Curve& curve, const std::vector<int>& free,
                   std::vector<double> steps, const std::vector<bool>& multiplicative,
                   int max_evaluations, Eigen::VectorXd* parameters, double min_positive,
                   double max_positive) {
  // Steps below this share of their start size have converged.
  constexpr double kMinStepShare = 1e-4;
  Eigen::VectorXd best = *parameters;
  double best_rss = set.RefineLinear(&best, &curve);
  if (!std::isfinite(best_rss)) return;
  const std::vector<double> initial = steps;
  int evaluations = 0;
  while (evaluations < max_evaluations) {
    bool any_active = false;
    for (size_t k = 0; k < free.size() && evaluations < max_evaluations; ++k) {
      if (steps[k] < kMinStepShare * initial[k]) continue;
      any_active = true;
      bool improved = false;
      for (double direction : {1.0, -1.0}) {
        Eigen::VectorXd trial = best;
        const int j = free[k];
        trial[j] = multiplicative[k] ? trial[j] * std::exp(direction * steps[k])
                                     : trial[j] + direction * steps[k];
        if (!(trial[j] >= set.Lower()[j] && trial[j] <= set.Upper()[j])) continue;
        if (multiplicative[k] &&
            (std::abs(trial[j]) < min_positive || std::abs(trial[j]) > max_positive)) {
          continue;
        }
        const double rss = set.RefineLinear(&trial, &curve);
        ++evaluations;
        if (rss < best_rss) {
          best_rss = rss;
          best = trial;
          improved = true;
          break;
        }
      }
      steps[k] *= improved ? 2.0 : 0.5;
    }
    if (!any_active) break;
  }
  *parameters = best;
}

namespace {

// rss of the best a*exp(-x/tau) (+ c) for one tau; fills amplitude and offset.
double ExponentialRss(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                      const Eigen::VectorXd& weight, bool with_offset, double tau,
                      ExpProfile* out) {
  const int n = static_cast<int>(x.size());
  Eigen::MatrixXd design(n, with_offset ? 2 : 1);
  design.col(0) = (-x.array() / tau).exp();
  if (with_offset) design.col(1).setOnes();
  if (!design.allFinite()) return kInf;
  Eigen::VectorXd coefficients;
  const double rss = SolveSmallLeastSquares(design, y, weight, &coefficients);
  if (!std::isfinite(rss)) return kInf;
  out->tau = tau;
  out->amplitude = coefficients[0];
  out->offset = with_offset ? coefficients[1] : 0.0;
  out->rss = rss;
  return rss;
}

}  // namespace

bool ProfileExponential(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const Eigen::VectorXd& weight, bool with_offset, double tau_lo,
                        double tau_hi, ExpProfile* out) {
  constexpr int kGridPoints = 24;
  constexpr int kGoldenSteps = 20;
  const std::vector<double> taus = Spaced(tau_lo, tau_hi, kGridPoints, true);
  ExpProfile trial;
  double best_rss = kInf;
  int best = -1;
  for (int k = 0; k < kGridPoints; ++k) {
    const double rss = ExponentialRss(x, y, weight, with_offset, taus[k], &trial);
    if (rss < best_rss) {
      best_rss = rss;
      best = k;
      *out = trial;
    }
  }
  if (best < 0) return false;
  // Golden-section search on log tau between the grid neighbours of the best point.
  double a = std::log(taus[std::max(best - 1, 0)]);
  double b = std::log(taus[std::min(best + 1, kGridPoints - 1)]);
  const double ratio = 0.5 * (std::sqrt(5.0) - 1.0);
  for (int step = 0; step < kGoldenSteps; ++step) {
    const double c = b - ratio * (b - a);
    const double d = a + ratio * (b - a);
    const double fc = ExponentialRss(x, y, weight, with_offset, std::exp(c), &trial);
    if (fc < best_rss) {
      best_rss = fc;
      *out = trial;
    }
    const double fd = ExponentialRss(x, y, weight, with_offset, std::exp(d), &trial);
    if (fd < best_rss) {
      best_rss = fd;
      *out = trial;
    }
    if (fc < fd) {
      b = d;
    } else {
      a = c;
    }
  }
  return true;
}

}  // namespace guess
}  // namespace foothold
