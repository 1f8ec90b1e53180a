// Guesses for the dose-response families. logistic4/5: plateaus from the ends (or from
// quantiles), log_ec50 where the smoothed response crosses the midpoint, hill from the
// slope there (the logistic's slope at its midpoint is (top - bottom) hill ln10 / 4, and
// its sign gives the direction), and a profile over (log_ec50, hill) with the plateaus
// solved linearly. michaelis_menten: the reciprocal (Lineweaver-Burk) and Hanes-Woolf
// linearisations and a profile over km. hill_binding: the Hill plot
// ln(y / (bmax - y)) = n ln x - n ln kd for plateau guesses, and a profile over (kd, n).

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "engine/solve/levenberg_marquardt.h"
#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/linearise.h"

namespace foothold {
namespace guess {
namespace {

constexpr double kLn10 = 2.302585092994046;
constexpr double kPlateauShare = 0.15;
constexpr int kProfilePoints = 250;
// Iterations of each coarse logistic5 run on the prepared curve.
constexpr int kCoarseIterations = 200;

// Running mean over about 2% of the points either side, for crossings and slopes.
Eigen::VectorXd RunningMean(const Eigen::VectorXd& y) {
  const int n = static_cast<int>(y.size());
  const int half = std::max(1, n / 50);
  Eigen::VectorXd out(n);
  for (int i = 0; i < n; ++i) {
    const int lo = std::max(0, i - half), hi = std::min(n - 1, i + half);
    out[i] = y.segment(lo, hi - lo + 1).mean();
  }
  return out;
}

// x where the smoothed response first crosses `level` (the middle of the range if never).
double Crossing(const Curve& curve, const Eigen::VectorXd& smooth, double level) {
  for (int i = 0; i + 1 < curve.NumPoints(); ++i) {
    const double a = smooth[i] - level, b = smooth[i + 1] - level;
    if (a == 0) return curve.x[i];
    if ((a < 0) != (b < 0)) return curve.x[i] + a / (a - b) * (curve.x[i + 1] - curve.x[i]);
  }
  return curve.x_min + 0.5 * curve.XSpan();
}

// Slope of the straight line through the points whose smoothed response lies in the
// middle 40% between the plateaus.
double MidSlope(const Curve& curve, const Eigen::VectorXd& smooth, double low, double high) {
  std::vector<double> u, v;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    const double share = (smooth[i] - low) / (high - low);
    if (share > 0.3 && share < 0.7) {
      u.push_back(curve.x[i]);
      v.push_back(curve.y[i]);
    }
  }
  if (u.size() < 2) return (high - low) / curve.XSpan();
  const signal::LineFit line = signal::FitLine(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                                               Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
  return line.IsOk() && line.slope != 0 ? line.slope : (high - low) / curve.XSpan();
}

// logistic5: with asymmetry != 1 the mirrored reading (top, bottom, -hill) is a different
// curve with its own basin, and asymmetry trades against log_ec50 and hill along a long
// curved valley that grids and pattern searches follow poorly. So for both readings and a
// few asymmetries (the midpoint kept where the data put it), a Levenberg-Marquardt run on
// the prepared curve (at most kMaxCurvePoints bin means: a coarse, cheap problem) walks the
// valley; the best end of each reading becomes a candidate, scored like every other on the
// full data.
void ScanAsymmetry(const Curve& sub, const Eigen::VectorXd& symmetric, CandidateSet* set,
                   const Model& model) {
  const double mid_x =
      symmetric[2] - std::log10(std::pow(2.0, 1.0 / symmetric[4]) - 1.0) / symmetric[3];
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = sub.x;
  problem.data.response = sub.y;
  problem.data.sigma = sub.weight.array().rsqrt();
  problem.lower = set->Lower();
  problem.upper = set->Upper();
  LevenbergMarquardtOptions options;
  options.max_iterations = kCoarseIterations;
  for (double reading : {1.0, -1.0}) {
    Eigen::VectorXd best;
    double best_cost = std::numeric_limits<double>::infinity();
    for (double s : {0.5, 1.0, 2.0}) {
      Eigen::VectorXd p = symmetric;
      if (reading < 0) {
        p[0] = symmetric[1];
        p[1] = symmetric[0];
        p[3] = -symmetric[3];
      }
      p[4] = s;
      p[2] = mid_x + std::log10(std::pow(2.0, 1.0 / s) - 1.0) / p[3];
      set->RefineLinear(&p, &sub);
      const LocalFitSummary fit = MinimizeLevenbergMarquardt(problem, p, options);
      if (std::isfinite(fit.final_cost) && fit.final_cost < best_cost &&
          fit.parameters.allFinite()) {
        best_cost = fit.final_cost;
        best = fit.parameters;
      }
    }
    if (best.size() != 0) set->Add(reading > 0 ? "coarse_fit" : "coarse_fit_mirror", best);
  }
}

void GuessLogistic(const Curve& curve, bool five, CandidateSet* set, const Model& model) {
  const Eigen::VectorXd smooth = RunningMean(curve.y);
  const double left = HeadMean(curve, kPlateauShare);
  const double right = TailMean(curve, kPlateauShare);
  const double span = curve.XSpan();
  struct Plateaus {
    const char* name;
    double bottom, top;
  };
  // bottom is the left plateau and top the right, so hill > 0 always reads left to right;
  // the quantile version orders them by value and lets the slope's sign give the direction.
  const double q_low = Quantile(curve.y, 0.05), q_high = Quantile(curve.y, 0.95);
  const std::vector<Plateaus> plateaus = {{"midpoint", left, right}, {"quantiles", q_low, q_high}};
  for (const Plateaus& plateau : plateaus) {
    if (plateau.top == plateau.bottom) continue;
    const double mid_x = Crossing(curve, smooth, 0.5 * (plateau.bottom + plateau.top));
    const double slope = MidSlope(curve, smooth, std::min(left, right), std::max(left, right));
    double hill = 4.0 * slope / ((plateau.top - plateau.bottom) * kLn10);
    if (!std::isfinite(hill) || hill == 0) hill = 4.0 / span;
    if (!five) {
      set->Add(plateau.name, Eigen::Vector4d(plateau.bottom, plateau.top, mid_x, hill));
      continue;
    }
    // 1/(1 + 10^((c - x) h))^s = 1/2 at x = c - log10(2^(1/s) - 1) / h.
    for (double s : {1.0, 0.5, 2.0}) {
      const double c = mid_x + std::log10(std::pow(2.0, 1.0 / s) - 1.0) / hill;
      Eigen::VectorXd p(5);
      p << plateau.bottom, plateau.top, c, hill, s;
      set->Add(std::string(plateau.name) + (s == 1.0 ? "" : s < 1 ? "_s0.5" : "_s2"), p);
    }
  }
  // Profile: centers across the data, slopes from one transition per span to a step.
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  const std::vector<double> centers = Spaced(curve.x_min, curve.x_max, 15, false);
  const std::vector<double> slopes = Spaced(1.0 / span, 60.0 / span, 10, true);
  for (double c : centers) {
    for (double h : slopes) {
      for (double sign : {-1.0, 1.0}) {
        Eigen::VectorXd p(five ? 5 : 4);
        p.head<4>() << q_low, q_high, c, sign * h;
        if (five) p[4] = 1.0;
        starts.push_back(p);
      }
    }
  }
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  if (five && set->Best(&best)) ScanAsymmetry(curve, best, set, model);
  set->SetScale(0, curve.YSpan(), false);
  set->SetScale(1, curve.YSpan(), false);
  set->SetScale(2, std::max(span / 4, std::abs(curve.x_min + 0.5 * span)), false);
  set->SetScale(3, 4.0 / span, false);
  if (five) set->SetScale(4, 1.0, true);
}

void GuessMichaelisMenten(const Curve& curve, CandidateSet* set) {
  const signal::LinearisedFit reciprocal = signal::FitReciprocal(curve.x, curve.y);
  if (reciprocal.IsOk() && reciprocal.intercept > 0 && reciprocal.slope > 0) {
    set->Add("reciprocal",
             Eigen::Vector2d(1.0 / reciprocal.intercept, reciprocal.slope / reciprocal.intercept));
  }
  // Hanes-Woolf: x / y = km / vmax + x / vmax, on points with y > 0.
  std::vector<double> u, v;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    if (curve.y[i] > 0) {
      u.push_back(curve.x[i]);
      v.push_back(curve.x[i] / curve.y[i]);
    }
  }
  if (u.size() >= 3) {
    const signal::LineFit line = signal::FitLine(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                                                 Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
    if (line.IsOk() && line.slope > 0 && line.intercept > 0) {
      set->Add("hanes", Eigen::Vector2d(1.0 / line.slope, line.intercept / line.slope));
    }
  }
  const Eigen::VectorXd smooth = RunningMean(curve.y);
  const double vmax = std::max(smooth.maxCoeff(), 0.0) * 1.2;
  const double km = std::max(Crossing(curve, smooth, 0.5 * vmax), curve.XSpan() * 1e-3);
  set->Add("halfmax", Eigen::Vector2d(vmax, km));
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  const double x_top = std::max(std::abs(curve.x_max), curve.XSpan());
  for (double k : Spaced(x_top * 1e-3, x_top * 1e2, 30, true))
    starts.push_back(Eigen::Vector2d(1, k));
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  set->SetScale(0, std::max(vmax, curve.YSpan()), true);
  set->SetScale(1, std::max(km, x_top / 10), true);
}

void GuessHillBinding(const Curve& curve, CandidateSet* set) {
  const Eigen::VectorXd smooth = RunningMean(curve.y);
  const double top = std::max(smooth.maxCoeff(), 0.0);
  const double x_top = std::max(std::abs(curve.x_max), curve.XSpan());
  for (double factor : {1.05, 1.3}) {
    const double bmax = top * factor;
    std::vector<double> u, v;
    for (int i = 0; i < curve.NumPoints(); ++i) {
      const double ratio = curve.y[i] / bmax;
      if (curve.x[i] > 0 && ratio > 0.05 && ratio < 0.95) {
        u.push_back(std::log(curve.x[i]));
        v.push_back(std::log(ratio / (1.0 - ratio)));
      }
    }
    if (u.size() < 3) continue;
    const signal::LineFit line = signal::FitLine(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                                                 Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
    if (line.IsOk() && line.slope > 0) {
      set->Add(factor < 1.1 ? "loglinear" : "loglinear_high",
               Eigen::Vector3d(bmax, std::exp(-line.intercept / line.slope), line.slope));
    }
  }
  const double kd = std::max(Crossing(curve, smooth, 0.5 * top * 1.05), x_top * 1e-3);
  set->Add("halfmax", Eigen::Vector3d(top * 1.05, kd, 1.0));
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  for (double k : Spaced(x_top * 1e-3, x_top * 1e2, 20, true)) {
    for (double n : {0.5, 0.8, 1.0, 1.5, 2.2, 3.3, 5.0}) starts.push_back(Eigen::Vector3d(1, k, n));
  }
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  set->SetScale(0, std::max(top, curve.YSpan()), true);
  set->SetScale(1, std::max(kd, x_top / 10), true);
  set->SetScale(2, 1.0, true);
}

int CountBelow(const Eigen::VectorXd& values, double limit) {
  return static_cast<int>((values.array() < limit).count());
}

}  // namespace

bool GuessDoseResponseFamily(const GuessContext& context, std::string* error) {
  const Curve& curve = *context.curve;
  CandidateSet& set = *context.set;
  const std::string& name = context.request->name;
  const bool is_binding = name == "michaelis_menten" || name == "hill_binding";
  if (is_binding && curve.x_min < 0) {
    if (error != nullptr) {
      *error = name +
               " needs x >= 0 (a concentration): " + std::to_string(CountBelow(curve.x, 0.0)) +
               " of " + std::to_string(curve.NumPoints()) + " distinct x are < 0";
    }
    return false;
  }
  if (curve.IsConstant()) {
    set.Warn("constant response: the curve is guessed flat at " + std::to_string(curve.y_min));
    Eigen::VectorXd p = Eigen::VectorXd::Zero(set.NumParameters());
    if (is_binding) {
      p[0] = std::max(curve.y_min, 0.0);
      p[1] = std::max(curve.x_min, curve.XSpan() * 1e-3);
      if (name == "hill_binding") p[2] = 1.0;
    } else {
      p[0] = p[1] = curve.y_min;
      p[2] = curve.x_min + 0.5 * curve.XSpan();
      p[3] = 1.0;
      if (name == "logistic5") p[4] = 1.0;
    }
    set.Add("flat", p, false);
    return true;
  }
  if (is_binding && CountBelow(curve.y, 0.0) * 2 > curve.NumPoints()) {
    set.Warn(name + ": " + std::to_string(CountBelow(curve.y, 0.0)) + " of " +
             std::to_string(curve.NumPoints()) +
             " responses are negative, but the family is >= 0 for x >= 0; the guess is poor");
  }
  if (name == "logistic4") GuessLogistic(curve, false, &set, context.set->GetModel());
  if (name == "logistic5") GuessLogistic(curve, true, &set, context.set->GetModel());
  if (name == "michaelis_menten") GuessMichaelisMenten(curve, &set);
  if (name == "hill_binding") GuessHillBinding(curve, &set);
  return true;
}

}  // namespace guess
}  // namespace foothold
