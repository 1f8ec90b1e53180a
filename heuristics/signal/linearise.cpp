#include "heuristics/signal/linearise.h"

#include <cmath>
#include <sstream>
#include <vector>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/linear_fit.h"

namespace foothold {
namespace signal {
namespace {

// One transformed point, or false where the transform is undefined.
bool Transform(Linearisation kind, double x, double y, double* u, double* v, double* slope) {
  switch (kind) {
    case Linearisation::kLog:
      if (!(y > 0.0)) return false;
      *u = x;
      *v = std::log(y);
      *slope = 1.0 / y;  // d log y / dy
      return true;
    case Linearisation::kLogLog:
      if (!(y > 0.0 && x > 0.0)) return false;
      *u = std::log(x);
      *v = std::log(y);
      *slope = 1.0 / y;
      return true;
    case Linearisation::kReciprocal:
      if (x == 0.0 || y == 0.0) return false;
      *u = 1.0 / x;
      *v = 1.0 / y;
      *slope = 1.0 / (y * y);  // |d(1/y)/dy|
      return true;
  }
  return false;
}

const char* RequirementText(Linearisation kind) {
  switch (kind) {
    case Linearisation::kLog:
      return "y > 0";
    case Linearisation::kLogLog:
      return "x > 0 and y > 0";
    case Linearisation::kReciprocal:
      return "x != 0 and y != 0";
  }
  return "";
}

LinearisedFit FitTransformed(Linearisation kind, const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                             const Eigen::VectorXd& sigma, const LinearisationOptions& options) {
  LinearisedFit out;
  out.kind = kind;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  internal::CurveRequirements requirements;
  requirements.min_points = 2;
  requirements.needs_sorted = false;
  requirements.needs_y_variation = false;
  out.status = internal::CheckCurve(x, y, requirements, &out.message);
  if (out.IsOk() && sigma.size() != 0 && sigma.size() != x.size()) {
    out.status = SignalStatus::kSizeMismatch;
    out.message = "sigma has " + std::to_string(sigma.size()) + " values but x has " +
                  std::to_string(x.size());
  }
  for (Eigen::Index i = 0; out.IsOk() && i < sigma.size(); ++i) {
    if (!(std::isfinite(sigma[i]) && sigma[i] > 0.0)) {
      out.status = SignalStatus::kInvalidSigma;
      std::ostringstream text;
      text << "sigma[" << i << "] = " << sigma[i] << ": must be finite and > 0";
      out.message = text.str();
    }
  }
  if (!out.IsOk()) return out;

  std::vector<double> us, vs, ws;
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    double u = 0.0, v = 0.0, derivative = 0.0;
    if (!Transform(kind, x[i], y[i], &u, &v, &derivative)) {
      ++out.num_skipped;
      continue;
    }
    const double s = sigma.size() != 0 ? sigma[i] : 1.0;
    const double transformed_sigma = options.is_weighted ? derivative * s : 1.0;
    us.push_back(u);
    vs.push_back(v);
    ws.push_back(1.0 / (transformed_sigma * transformed_sigma));
  }
  out.num_used = static_cast<int>(us.size());
  if (out.num_used < options.min_points) {
    out.status = SignalStatus::kTooFewValidPoints;
    std::ostringstream text;
    text << out.num_used << " of " << x.size() << " points satisfy " << RequirementText(kind)
         << " (" << out.num_skipped << " skipped): need at least " << options.min_points;
    out.message = text.str();
    return out;
  }
  const auto map = [](std::vector<double>& v) {
    return Eigen::Map<Eigen::VectorXd>(v.data(), static_cast<Eigen::Index>(v.size()));
  };
  const LineFit line = FitLine(map(us), map(vs), map(ws));
  if (!line.IsOk()) {
    out.status = line.status;
    out.message = "transformed " + std::string(ToString(kind)) + " line: " + line.message;
    return out;
  }
  out.intercept = line.intercept;
  out.slope = line.slope;
  out.intercept_stderr = line.intercept_stderr;
  out.slope_stderr = line.slope_stderr;
  out.rss = line.rss;
  return out;
}

}  // namespace

const char* ToString(Linearisation kind) {
  switch (kind) {
    case Linearisation::kLog:
      return "log";
    case Linearisation::kLogLog:
      return "log_log";
    case Linearisation::kReciprocal:
      return "reciprocal";
  }
  return "unknown";
}

bool LinearisationOptions::Validate(std::string* error) const {
  if (min_points >= 2) return true;
  if (error) *error = "min_points = " + std::to_string(min_points) + ": must be >= 2";
  return false;
}

double LinearisedFit::Prefactor() const { return std::exp(intercept); }

LinearisedFit FitLogLinear(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                           const Eigen::VectorXd& sigma, const LinearisationOptions& options) {
  return FitTransformed(Linearisation::kLog, x, y, sigma, options);
}

LinearisedFit FitLogLog(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const Eigen::VectorXd& sigma, const LinearisationOptions& options) {
  return FitTransformed(Linearisation::kLogLog, x, y, sigma, options);
}

LinearisedFit FitReciprocal(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                            const Eigen::VectorXd& sigma, const LinearisationOptions& options) {
  return FitTransformed(Linearisation::kReciprocal, x, y, sigma, options);
}

}  // namespace signal
}  // namespace foothold
