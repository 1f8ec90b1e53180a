// Guesses for power_law (log-log line), gompertz (the asymptote from the upper plateau,
// the inflection at the steepest smoothed slope, where y = a / e and dy/dx = a r / e, and
// the linearisation ln(-ln(y / a)) = d - r x) and arrhenius (ln k against 1 / T is a line
// of slope -Ea / R). Each also gets a profile over its nonlinear parameters with the
// prefactor or asymptote solved linearly.

#include <algorithm>
#include <cmath>
#include <vector>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/linearise.h"

namespace foothold {
namespace guess {
namespace {

constexpr double kGasConstant = 8.314462618;  // J/(mol K), as in the arrhenius model
constexpr double kE = 2.718281828459045;
constexpr int kProfilePoints = 250;

int CountIf(const Eigen::VectorXd& values, bool (*predicate)(double)) {
  int count = 0;
  for (double v : values) count += predicate(v);
  return count;
}

std::string Of(int count, int total) {
  return std::to_string(count) + " of " + std::to_string(total);
}

void GuessPowerLaw(const Curve& curve, CandidateSet* set) {
  const int n = curve.NumPoints();
  const int positive = CountIf(curve.y, [](double v) { return v > 0; });
  const int negative = CountIf(curve.y, [](double v) { return v < 0; });
  const double sign = positive >= negative ? 1.0 : -1.0;
  if (positive > 0 && negative > 0) {
    set->Warn("power_law: y changes sign (" + Of(std::min(positive, negative), n) +
              " points have the minority sign), which a*x^k cannot; they are left out of the "
              "log-log line");
  }
  const signal::LinearisedFit loglog = signal::FitLogLog(curve.x, sign * curve.y);
  if (loglog.IsOk()) {
    set->Add("loglog", Eigen::Vector2d(sign * loglog.Prefactor(), loglog.slope));
  }
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  for (double k : Spaced(-6, 6, 49, false)) starts.push_back(Eigen::Vector2d(1, k));
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  set->SetScale(0, std::max(std::abs(best.size() ? best[0] : 1.0), 1e-300), true);
  set->SetScale(1, 1.0, false);
}

void GuessGompertz(const Curve& curve, CandidateSet* set) {
  const int n = curve.NumPoints();
  const double span = curve.XSpan();
  const double tail = TailMean(curve, 0.1);
  const double sign = tail >= 0 ? 1.0 : -1.0;
  // Steepest slope of a running mean (central differences over about 4% of the points).
  const int half = std::max(1, n / 25);
  double best_slope = 0, inflection = curve.x_min + 0.5 * span;
  for (int i = half; i + half < n; ++i) {
    const double slope =
        sign * (curve.y[i + half] - curve.y[i - half]) / (curve.x[i + half] - curve.x[i - half]);
    if (slope > best_slope) best_slope = slope, inflection = curve.x[i];
  }
  const double top = sign * std::max(sign * tail, sign * (sign > 0 ? curve.y_max : curve.y_min));
  for (double a : {tail, top * 1.05}) {
    if (a == 0) continue;
    const double rate = best_slope > 0 ? kE * best_slope / std::abs(a) : 4.0 / span;
    set->Add(a == tail ? "inflection" : "inflection_high",
             Eigen::Vector3d(a, rate * inflection, rate));
    // ln(-ln(y / a)) = d - r x on points with y / a in (0, 1).
    std::vector<double> u, v;
    for (int i = 0; i < n; ++i) {
      const double ratio = curve.y[i] / (a * 1.02);
      if (ratio > 0.02 && ratio < 0.98) {
        u.push_back(curve.x[i]);
        v.push_back(std::log(-std::log(ratio)));
      }
    }
    if (u.size() >= 3) {
      const signal::LineFit line = signal::FitLine(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                                                   Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
      if (line.IsOk() && line.slope < 0) {
        set->Add(a == tail ? "loglinear" : "loglinear_high",
                 Eigen::Vector3d(a * 1.02, line.intercept, -line.slope));
      }
    }
  }
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  for (double x0 : Spaced(curve.x_min - 0.2 * span, curve.x_max, 15, false)) {
    for (double r : Spaced(0.5 / span, 100.0 / span, 14, true)) {
      starts.push_back(Eigen::Vector3d(1, r * x0, r));
    }
  }
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  set->SetScale(0, std::max(std::abs(tail), curve.YSpan()), false);
  set->SetScale(1, std::max(1.0, std::abs(best.size() ? best[1] : 1.0)), false);
  set->SetScale(2, best_slope > 0 && tail != 0 ? kE * best_slope / std::abs(tail) : 4.0 / span,
                true);
}

void GuessArrhenius(const Curve& curve, CandidateSet* set) {
  const int n = curve.NumPoints();
  const int positive = CountIf(curve.y, [](double v) { return v > 0; });
  const Eigen::VectorXd inverse_t = curve.x.array().inverse();
  double ea_scale = kGasConstant * curve.x_max;
  if (positive < n) {
    set->Warn("arrhenius: " + Of(n - positive, n) +
              " rates are <= 0; the log-linear candidate uses the positive ones only");
  }
  const signal::LinearisedFit fit = signal::FitLogLinear(inverse_t, curve.y);
  if (fit.IsOk()) {
    const double ea = -fit.slope * kGasConstant;
    set->Add("loglinear", Eigen::Vector2d(fit.Prefactor(), std::max(ea, 0.0)));
    if (ea > 0) ea_scale = ea;
  }
  const Curve sub = Subsample(curve, kProfilePoints);
  std::vector<Eigen::VectorXd> starts;
  const double rt = kGasConstant * curve.x_min;
  for (double ea : Spaced(1e-2 * rt, 200 * rt, 40, true)) starts.push_back(Eigen::Vector2d(1, ea));
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  set->SetScale(0, std::max(std::abs(fit.IsOk() ? fit.Prefactor() : curve.y_max), 1e-300), true);
  set->SetScale(1, ea_scale, true);
}

}  // namespace

bool GuessGrowthFamily(const GuessContext& context, std::string* error) {
  const Curve& curve = *context.curve;
  CandidateSet& set = *context.set;
  const std::string& name = context.request->name;
  const int n = curve.NumPoints();
  if ((name == "power_law" || name == "arrhenius") && !(curve.x_min > 0)) {
    const int bad = CountIf(curve.x, [](double v) { return !(v > 0); });
    if (error != nullptr) {
      *error = name +
               (name == "arrhenius" ? " needs x > 0 (an absolute temperature in K): "
                                    : " needs x > 0: ") +
               Of(bad, n) + " distinct x are <= 0";
    }
    return false;
  }
  if (curve.IsConstant()) {
    set.Warn("constant response: the curve is guessed flat at " + std::to_string(curve.y_min));
    if (name == "power_law") set.Add("flat", Eigen::Vector2d(curve.y_min, 0.0), false);
    if (name == "gompertz") {
      set.Add("flat", Eigen::Vector3d(curve.y_min, -10.0, 1.0 / curve.XSpan()), false);
    }
    if (name == "arrhenius") {
      set.Add("flat", Eigen::Vector2d(std::max(curve.y_min, 0.0), 0.0), false);
    }
    return true;
  }
  if (name == "power_law") GuessPowerLaw(curve, &set);
  if (name == "gompertz") GuessGompertz(curve, &set);
  if (name == "arrhenius") GuessArrhenius(curve, &set);
  return true;
}

}  // namespace guess
}  // namespace foothold
