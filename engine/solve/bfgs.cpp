#include "engine/solve/bfgs.h"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "engine/solve/internal/line_search.h"

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// A trial whose value rises by no more than this fraction of |f| while the strong Wolfe
// curvature condition holds is accepted: near the optimum f is flat to rounding and only its
// gradient still tells a better point (the approximate Wolfe conditions of Hager & Zhang 2005,
// with a far smaller epsilon than their 1e-6).
constexpr double kApproximateWolfeEpsilon = 1e-14;
constexpr int kMaxZoom = 60;

struct LinePoint {
  double alpha = 0;
  double value = kInf;
  double slope = 0;  // phi'(alpha) = g(x + alpha d) . d
  Eigen::VectorXd gradient;
  bool finite = false;
};

class LineSearch {
 public:
  LineSearch(const SmoothObjective& objective, const Eigen::VectorXd& x, const Eigen::VectorXd& d,
             const Eigen::VectorXd& lower, const Eigen::VectorXd& upper, double value, double slope,
             const BfgsOptions& options, int* num_evaluations)
      : objective_(objective),
        x_(x),
        d_(d),
        lower_(lower),
        upper_(upper),
        value0_(value),
        slope0_(slope),
        options_(options),
        num_evaluations_(num_evaluations) {}

  // Finds a step satisfying the strong Wolfe conditions on (0, alpha_max] (Nocedal & Wright
  // Alg. 3.5), or Armijo alone at alpha_max. False when none was found within the budget.
  bool Search(double alpha_max, LinePoint* found) {
    LinePoint previous;
    previous.alpha = 0;
    previous.value = value0_;
    previous.slope = slope0_;
    previous.finite = true;
    double alpha = std::min(1.0, alpha_max);
    for (int i = 0; i < kMaxZoom; ++i) {
      if (Exhausted()) return false;
      LinePoint point = Evaluate(alpha);
      if (!point.finite) {  // too long: shorten towards the last good point
        alpha = previous.alpha + 0.5 * (alpha - previous.alpha);
        continue;
      }
      if (!Armijo(point) || (i > 0 && point.value >= previous.value)) {
        return Zoom(previous, point, found);
      }
      if (Curvature(point)) return Accept(point, found);
      if (point.slope >= 0) return Zoom(point, previous, found);
      if (alpha >= alpha_max) return Accept(point, found);
      previous = point;
      alpha = std::min(2 * alpha, alpha_max);
    }
    return false;
  }

 private:
  bool Exhausted() const { return *num_evaluations_ >= options_.max_evaluations; }

  LinePoint Evaluate(double alpha) {
    LinePoint point;
    point.alpha = alpha;
    const Eigen::VectorXd trial = internal::ProjectOntoBox(x_ + alpha * d_, lower_, upper_);
    ++*num_evaluations_;
    point.finite = objective_(trial, &point.value, &point.gradient) && std::isfinite(point.value) &&
                   point.gradient.allFinite();
    if (point.finite) point.slope = point.gradient.dot(d_);
    return point;
  }
  bool Armijo(const LinePoint& p) const {
    return p.value <= value0_ + options_.wolfe_c1 * p.alpha * slope0_;
  }
  bool Curvature(const LinePoint& p) const {
    return std::abs(p.slope) <= -options_.wolfe_c2 * slope0_;
  }
  bool ApproximateWolfe(const LinePoint& p) const {
    return p.value <= value0_ + kApproximateWolfeEpsilon * std::abs(value0_) && Curvature(p) &&
           p.slope <= (2 * options_.wolfe_c1 - 1) * slope0_;
  }
  bool Accept(const LinePoint& p, LinePoint* found) {
    *found = p;
    return true;
  }

  // Nocedal & Wright Alg. 3.6 with safeguarded quadratic interpolation.
  bool Zoom(LinePoint lo, LinePoint hi, LinePoint* found) {
    for (int i = 0; i < kMaxZoom; ++i) {
      if (Exhausted()) break;
      const double width = hi.alpha - lo.alpha;
      double alpha = lo.alpha + 0.5 * width;
      if (hi.finite) {
        const double curvature = hi.value - lo.value - lo.slope * width;
        if (curvature > 0) alpha = lo.alpha - lo.slope * width * width / (2 * curvature);
      }
      const double a = std::min(lo.alpha, hi.alpha);
      const double b = std::max(lo.alpha, hi.alpha);
      alpha = std::min(std::max(alpha, a + 0.1 * (b - a)), b - 0.1 * (b - a));
      if (b - a <= 1e-16 * std::max(1.0, b)) break;
      LinePoint point = Evaluate(alpha);
      if (!point.finite || !Armijo(point) || point.value >= lo.value) {
        if (point.finite && ApproximateWolfe(point)) return Accept(point, found);
        hi = point;
        continue;
      }
      if (Curvature(point)) return Accept(point, found);
      if (point.slope * (hi.alpha - lo.alpha) >= 0) hi = lo;
      lo = point;
    }
    // The bracket collapsed: its better end still satisfies Armijo if it moved at all.
    if (lo.alpha > 0) return Accept(lo, found);
    return false;
  }

  const SmoothObjective& objective_;
  const Eigen::VectorXd& x_;
  const Eigen::VectorXd& d_;
  const Eigen::VectorXd& lower_;
  const Eigen::VectorXd& upper_;
  double value0_;
  double slope0_;
  const BfgsOptions& options_;
  int* num_evaluations_;
};

double GradientMeasure(const Eigen::VectorXd& x, const Eigen::VectorXd& pg) {
  double largest = 0;
  for (int i = 0; i < x.size(); ++i) {
    largest = std::max(largest, std::abs(pg[i]) * std::max(std::abs(x[i]), 1.0));
  }
  return largest;
}

}  // namespace

bool BfgsOptions::Validate(std::string* error) const {
  std::ostringstream out;
  auto wolfe_rule_broken = [&] {
    if (wolfe_c1 > 0 && wolfe_c1 < wolfe_c2 && wolfe_c2 < 1) return false;
    out << "wolfe_c1 = " << wolfe_c1 << ", wolfe_c2 = " << wolfe_c2
        << ": must satisfy 0 < wolfe_c1 < wolfe_c2 < 1";
    return true;
  };
  if (!internal::SharedRuleBroken(*this, &out) && !wolfe_rule_broken() &&
      !internal::DeadlineRuleBroken(deadline_seconds, &out)) {
    return true;
  }
  if (error != nullptr) *error = out.str();
  return false;
}

BfgsOptions BfgsOptionsFrom(const LevenbergMarquardtOptions& lm) {
  BfgsOptions options;
  options.max_iterations = std::max(lm.max_iterations, 2 * lm.max_iterations);
  options.max_evaluations = std::max(lm.max_evaluations, 2 * lm.max_evaluations);
  internal::CopySharedFields(lm, &options);
  return options;
}

BfgsSummary MinimizeBfgs(const SmoothObjective& objective, const Eigen::VectorXd& start,
                         const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                         const Eigen::MatrixXd& initial_inverse_hessian,
                         const BfgsOptions& options) {
  const internal::Stopwatch stopwatch;
  const int n = static_cast<int>(start.size());
  BfgsSummary summary;
  summary.x = internal::ProjectOntoBox(start, lower, upper);
  std::ostringstream message;
  message << "bfgs: ";
  double value = kInf;
  Eigen::VectorXd gradient;
  ++summary.num_evaluations;
  if (!objective(summary.x, &value, &gradient) || !std::isfinite(value) || !gradient.allFinite()) {
    summary.termination = Termination::kNonFiniteModel;
    summary.initial_value = summary.final_value = std::numeric_limits<double>::quiet_NaN();
    summary.message = message.str() + "the objective is not finite at the start";
    return summary;
  }
  summary.initial_value = value;
  if (n == 0) {
    summary.termination = Termination::kNoFreeParameters;
    summary.final_value = value;
    summary.message = message.str() + "no free parameters";
    return summary;
  }
  const bool has_initial = initial_inverse_hessian.rows() == n;
  auto reset = [&](Eigen::MatrixXd* h, double gamma) {
    *h = has_initial ? initial_inverse_hessian
                     : Eigen::MatrixXd(gamma * Eigen::MatrixXd::Identity(n, n));
  };
  Eigen::MatrixXd h;
  reset(&h, 1.0 / std::max(gradient.lpNorm<Eigen::Infinity>(), 1e-300));
  bool just_reset = true;
  Eigen::VectorXd& x = summary.x;
  internal::IterationLimits limits;
  limits.max_iterations = options.max_iterations;
  limits.max_evaluations = options.max_evaluations;
  limits.deadline_seconds = options.deadline_seconds;
  limits.callback = &options.callback;

  while (true) {
    const Eigen::VectorXd pg = internal::ProjectedGradient(x, gradient, lower, upper);
    const double measure = GradientMeasure(x, pg);
    if (measure <= options.gradient_tolerance * std::abs(value)) {
      summary.termination = Termination::kGradientConverged;
      message << "scaled projected gradient " << measure << " <= " << options.gradient_tolerance
              << " * |f|";
      break;
    }
    if (internal::IterationLimitReached(limits, summary.num_iterations, summary.num_evaluations,
                                        value, stopwatch.ElapsedSeconds(), &summary.termination,
                                        &message)) {
      break;
    }
    ++summary.num_iterations;

    // Direction on the free variables; restart from the initial matrix when not descent.
    Eigen::VectorXd d = -(h * pg);
    for (int i = 0; i < n; ++i) {
      if (pg[i] == 0 && gradient[i] != 0) d[i] = 0;
    }
    if (!(d.dot(pg) < 0)) {
      reset(&h, 1.0 / std::max(pg.lpNorm<Eigen::Infinity>(), 1e-300));
      just_reset = true;
      d = -(h * pg);
      for (int i = 0; i < n; ++i) {
        if (pg[i] == 0 && gradient[i] != 0) d[i] = 0;
      }
      if (!(d.dot(pg) < 0)) d = -pg;
    }
    const bool fresh_direction = just_reset;  // this step comes from the initial matrix
    const double alpha_max = internal::MaxStepInBox(x, d, lower, upper);
    LineSearch search(objective, x, d, lower, upper, value, gradient.dot(d), options,
                      &summary.num_evaluations);
    LinePoint point;
    if (!(alpha_max > 0) || !search.Search(alpha_max, &point)) {
      if (!fresh_direction) {  // the quasi-Newton matrix may be poor: try once more from scratch
        reset(&h, 1.0 / std::max(pg.lpNorm<Eigen::Infinity>(), 1e-300));
        just_reset = true;
        continue;
      }
      summary.termination = Termination::kStepConverged;
      message << "the line search found no acceptable step along a descent direction (slope "
              << gradient.dot(d) << ", largest feasible step " << alpha_max << ")";
      break;
    }
    const Eigen::VectorXd x_new = internal::ProjectOntoBox(x + point.alpha * d, lower, upper);
    const Eigen::VectorXd s = x_new - x;
    const Eigen::VectorXd y = point.gradient - gradient;
    const double reduction = (value - point.value) / std::max(std::abs(value), 1e-300);
    const double step_norm = s.norm();
    const double x_norm = x.norm();
    x = x_new;
    value = point.value;
    gradient = point.gradient;
    // BFGS update of the inverse Hessian (Nocedal & Wright eq. 6.17), skipped unless s^T y > 0.
    const double sy = s.dot(y);
    if (sy > 1e-12 * step_norm * y.norm()) {
      if (just_reset && !has_initial) h *= sy / y.squaredNorm();  // eq. 6.20
      const double rho = 1 / sy;
      const Eigen::VectorXd hy = h * y;
      h += (rho * rho * y.dot(hy) + rho) * (s * s.transpose()) -
           rho * (hy * s.transpose() + s * hy.transpose());
      just_reset = false;
    }
    if (reduction >= 0 && reduction <= options.cost_tolerance) {
      summary.termination = Termination::kCostConverged;
      message << "relative cost change " << reduction << " <= " << options.cost_tolerance;
      break;
    }
    if (internal::IsStepBelowTolerance(step_norm, x_norm, options.step_tolerance)) {
      // A vanishing step from a stale quasi-Newton matrix says little about the optimum:
      // restart from the initial matrix once before believing it.
      if (!fresh_direction) {
        reset(&h, 1.0 / std::max(pg.lpNorm<Eigen::Infinity>(), 1e-300));
        just_reset = true;
        continue;
      }
      summary.termination = Termination::kStepConverged;
      internal::WriteRelativeStep(step_norm, x_norm, options.step_tolerance, &message);
      break;
    }
  }
  summary.final_value = value;
  summary.message = message.str();
  summary.total_seconds = stopwatch.ElapsedSeconds();
  return summary;
}

}  // namespace foothold
