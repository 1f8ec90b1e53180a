#include "heuristics/families/guess_common.h"

#include <Eigen/Cholesky>
#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "heuristics/families/catalogue.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace guess {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// A clamped value is moved this share of the room inside the bound, so that a width or a
// rate clamped to a lower bound of 0 does not land on the undefined point itself.
constexpr double kClampInset = 1e-3;

bool Fail(std::string* error, const std::string& message) {
  if (error != nullptr) *error = message;
  return false;
}

std::string Number(double value) {
  std::ostringstream stream;
  stream.precision(6);
  stream << value;
  return stream.str();
}

}  // namespace

bool PrepareCurve(const Dataset& data, const std::string& family, int min_points, Curve* curve,
                  std::string* error) {
  int column = data.PredictorIndex("x");
  if (column < 0 && data.predictors.cols() == 1) column = 0;
  if (column < 0) return Fail(error, family + ": the data have no predictor column 'x'");
  const Eigen::VectorXd x = data.predictors.col(column);
  signal::SortMergeOptions merge_options;
  merge_options.min_points = 1;
  const signal::PreparedCurve prepared =
      signal::SortAndMerge(x, data.response, data.sigma, merge_options);
  if (prepared.status == signal::SignalStatus::kAllXEqual ||
      (prepared.IsOk() && prepared.NumPoints() == 1 && data.NumPoints() > 1)) {
    return Fail(error, family + ": x: all " + std::to_string(data.NumPoints()) + " values equal " +
                           Number(x.size() ? x[0] : 0.0) + "; the family needs x to vary");
  }
  if (!prepared.IsOk() && prepared.status != signal::SignalStatus::kTooFewPoints) {
    return Fail(error, family + ": " + prepared.message);
  }
  if (prepared.NumPoints() < min_points) {
    return Fail(error, family + " needs at least " + std::to_string(min_points) +
                           " points with distinct x: got " + std::to_string(prepared.NumPoints()));
  }
  const int n = prepared.NumPoints();
  Eigen::VectorXd weight = Eigen::VectorXd::Ones(n);
  if (prepared.sigma.size() == n) weight = prepared.sigma.array().square().inverse();
  // Bin means of equal count keep the shape of long series at a fraction of the cost.
  const int num_bins = std::min(n, kMaxCurvePoints);
  curve->x.resize(num_bins);
  curve->y.resize(num_bins);
  curve->weight.resize(num_bins);
  for (int b = 0; b < num_bins; ++b) {
    const int begin = static_cast<int>(static_cast<long>(b) * n / num_bins);
    const int end = static_cast<int>(static_cast<long>(b + 1) * n / num_bins);
    double sum_w = 0, sum_x = 0, sum_y = 0;
    for (int i = begin; i < end; ++i) {
      sum_w += weight[i];
      sum_x += weight[i] * prepared.x[i];
      sum_y += weight[i] * prepared.y[i];
    }
    curve->x[b] = end - begin == 1 ? prepared.x[begin] : sum_x / sum_w;
    curve->y[b] = sum_y / sum_w;
    curve->weight[b] = sum_w;
  }
  curve->x_min = curve->x[0];
  curve->x_max = curve->x[num_bins - 1];
  curve->y_min = curve->y.minCoeff();
  curve->y_max = curve->y.maxCoeff();
  curve->num_input_points = data.NumPoints();
  return true;
}

double SolveSmallLeastSquares(const Eigen::MatrixXd& design, const Eigen::VectorXd& y,
                              const Eigen::VectorXd& weight, Eigen::VectorXd* coefficients) {
  const int p = static_cast<int>(design.cols());
  // The normal equations of the unit-norm columns D^-1 (A^T W A) D^-1, D the column norms,
  // formed from A^T W A directly: one n x p temporary instead of three.
  const Eigen::MatrixXd weighted = weight.asDiagonal() * design;
  Eigen::MatrixXd normal = design.transpose() * weighted;
  Eigen::VectorXd rhs = weighted.transpose() * y;
  Eigen::VectorXd norms(p);
  for (int j = 0; j < p; ++j) {
    norms[j] = std::sqrt(normal(j, j));
    if (!(norms[j] > 0) || !std::isfinite(norms[j])) return kInf;
  }
  normal = norms.asDiagonal().inverse() * normal * norms.asDiagonal().inverse();
  rhs = rhs.cwiseQuotient(norms);
  const Eigen::LDLT<Eigen::MatrixXd> ldlt(normal);
  // A pivot far below the unit diagonal means nearly dependent columns.
  constexpr double kMinPivot = 1e-12;
  if (ldlt.info() != Eigen::Success || !(ldlt.vectorD().minCoeff() > kMinPivot)) return kInf;
  *coefficients = ldlt.solve(rhs).cwiseQuotient(norms);
  const double rss = ((y - design * *coefficients).array().square() * weight.array()).sum();
  return coefficients->allFinite() && std::isfinite(rss) ? rss : kInf;
}

Curve Subsample(const Curve& curve, int max_points) {
  const int n = curve.NumPoints();
  if (n <= max_points) return curve;
  Curve out = curve;
  out.x.resize(max_points);
  out.y.resize(max_points);
  out.weight.resize(max_points);
  for (int k = 0; k < max_points; ++k) {
    const int i = static_cast<int>(static_cast<long>(k) * (n - 1) / (max_points - 1));
    out.x[k] = curve.x[i];
    out.y[k] = curve.y[i];
    out.weight[k] = curve.weight[i];
  }
  return out;
}

double Quantile(Eigen::VectorXd values, double q) {
  const int n = static_cast<int>(values.size());
  if (n == 0) return 0.0;
  std::sort(values.data(), values.data() + n);
  const double position = std::clamp(q, 0.0, 1.0) * (n - 1);
  const int below = static_cast<int>(std::floor(position));
  const int above = std::min(below + 1, n - 1);
  return values[below] + (position - below) * (values[above] - values[below]);
}

double HeadMean(const Curve& curve, double share) {
  const int count = std::max(1, static_cast<int>(std::lround(share * curve.NumPoints())));
  return curve.y.head(count).mean();
}

double TailMean(const Curve& curve, double share) {
  const int count = std::max(1, static_cast<int>(std::lround(share * curve.NumPoints())));
  return curve.y.tail(count).mean();
}

double Interpolate(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double t) {
  const int n = static_cast<int>(x.size());
  if (t <= x[0]) return y[0];
  if (t >= x[n - 1]) return y[n - 1];
  const int above = static_cast<int>(std::upper_bound(x.data(), x.data() + n, t) - x.data());
  const int below = above - 1;
  const double share = (t - x[below]) / (x[above] - x[below]);
  return y[below] + share * (y[above] - y[below]);
}

std::vector<double> Spaced(double lo, double hi, int n, bool log) {
  std::vector<double> values;
  for (int k = 0; k < n; ++k) {
    const double share = n == 1 ? 0.5 : static_cast<double>(k) / (n - 1);
    values.push_back(log ? lo * std::pow(hi / lo, share) : lo + share * (hi - lo));
  }
  return values;
}

CandidateSet::CandidateSet(const Model& model, const Dataset& data, const Eigen::VectorXd& lower,
                           const Eigen::VectorXd& upper, std::vector<int> linear)
    : model_(model),
      num_parameters_(model.NumParameters()),
      lower_(lower),
      upper_(upper),
      linear_(std::move(linear)) {
  int column = data.PredictorIndex("x");
  if (column < 0) column = 0;
  x_ = data.predictors.col(column);
  y_ = data.response;
  weight_ = data.HasSigma() ? Eigen::VectorXd(data.sigma.array().square().inverse())
                            : Eigen::VectorXd::Ones(data.NumPoints());
  scale_ = Eigen::VectorXd::Ones(num_parameters_);
  log_scale_.assign(num_parameters_, false);
  has_scale_.assign(num_parameters_, false);
}

double CandidateSet::Clamp(int j, double value) const {
  const double lo = lower_[j];
  const double hi = upper_[j];
  if (value >= lo && value <= hi) return value;
  if (value < lo) {
    const double room = std::isfinite(hi) ? hi - lo : std::max(lo - value, std::abs(lo));
    return std::min(hi, lo + kClampInset * room);
  }
  const double room = std::isfinite(lo) ? hi - lo : std::max(value - hi, std::abs(hi));
  return std::max(lo, hi - kClampInset * room);
}

double CandidateSet::CurveRss(const Eigen::VectorXd& parameters, const Eigen::MatrixXd& x,
                              const Eigen::VectorXd& y, const Eigen::VectorXd& weight) const {
  Eigen::VectorXd values = Eigen::VectorXd::Constant(y.size(), std::nan(""));
  model_.Evaluate(x, parameters.data(), values.data());
  const double rss = ((y - values).array().square() * weight.array()).sum();
  return std::isfinite(rss) ? rss : kInf;
}

double CandidateSet::Rss(const Eigen::VectorXd& parameters) const {
  return CurveRss(parameters, x_, y_, weight_);
}

double CandidateSet::SolveLinear(Eigen::VectorXd* parameters, const Eigen::MatrixXd& x,
                                 const Eigen::VectorXd& y, const Eigen::VectorXd& weight) const {
  if (linear_.empty()) return CurveRss(*parameters, x, y, weight);
  const int n = static_cast<int>(y.size());
  // f = sum_{j in L} p_j B_j + C, with B_j the Jacobian column. Evaluated with p_L = 0 the
  // model gives C itself, so y - C carries no cancellation against a large sum p_j B_j
  // (a power of a tiny x), and every rss below follows from B and C without evaluating
  // the model again.
  Eigen::VectorXd base = *parameters;
  for (int j : linear_) base[j] = 0.0;
  Eigen::VectorXd rest = Eigen::VectorXd::Constant(n, std::nan(""));
  Eigen::MatrixXd jacobian(n, num_parameters_);
  model_.EvaluateWithJacobian(x, base.data(), rest.data(), jacobian.data());
  Eigen::MatrixXd design(n, linear_.size());
  Eigen::VectorXd linear_values(linear_.size());
  for (size_t k = 0; k < linear_.size(); ++k) {
    design.col(k) = jacobian.col(linear_[k]);
    linear_values[k] = (*parameters)[linear_[k]];
  }
  if (!design.allFinite() || !rest.allFinite()) return CurveRss(*parameters, x, y, weight);
  const Eigen::VectorXd target = y - rest;
  const auto rss_of = [&](const Eigen::VectorXd& values) {
    const double rss = ((target - design * values).array().square() * weight.array()).sum();
    return std::isfinite(rss) ? rss : kInf;
  };
  const double before = rss_of(linear_values);
  Eigen::VectorXd coefficients;
  if (!std::isfinite(SolveSmallLeastSquares(design, target, weight, &coefficients))) return before;
  for (size_t k = 0; k < linear_.size(); ++k) {
    coefficients[k] = Clamp(linear_[k], coefficients[k]);
  }
  const double after = rss_of(coefficients);
  if (!(after <= before)) return before;
  for (size_t k = 0; k < linear_.size(); ++k) (*parameters)[linear_[k]] = coefficients[k];
  return after;
}

double CandidateSet::RefineLinear(Eigen::VectorXd* parameters, const Curve* curve) const {
  if (curve == nullptr) return SolveLinear(parameters, x_, y_, weight_);
  const Eigen::MatrixXd x = curve->x;
  return SolveLinear(parameters, x, curve->y, curve->weight);
}

double CandidateSet::Add(const std::string& name, Eigen::VectorXd parameters, bool refine_linear) {
  if (parameters.size() != num_parameters_ || !parameters.allFinite()) {
    ++num_dropped_;
    return kInf;
  }
  bool clamped = false;
  for (int j = 0; j < num_parameters_; ++j) {
    const double inside = Clamp(j, parameters[j]);
    if (inside != parameters[j]) clamped = true;
    parameters[j] = inside;
  }
  if (clamped) ++num_clamped_;
  if (refine_linear) RefineLinear(&parameters, curve_);
  const double rss = Rss(parameters);
  if (!std::isfinite(rss) || !parameters.allFinite()) {
    ++num_dropped_;
    return kInf;
  }
  candidates_.push_back({name, parameters, rss});
  return rss;
}

bool CandidateSet::Best(Eigen::VectorXd* parameters) const {
  const GuessCandidate* best = nullptr;
  for (const GuessCandidate& candidate : candidates_) {
    if (best == nullptr || candidate.rss < best->rss) best = &candidate;
  }
  if (best != nullptr) *parameters = best->parameters;
  return best != nullptr;
}

void CandidateSet::SetScale(int j, double scale, bool log_scale) {
  if (!(std::isfinite(scale) && scale > 0)) return;
  scale_[j] = scale;
  log_scale_[j] = log_scale && lower_[j] >= 0;
  has_scale_[j] = true;
}

void CandidateSet::Warn(const std::string& warning) { warnings_.push_back(warning); }

bool CandidateSet::Finish(const std::string& family, const GuessOptions& options, GuessResult* out,
                          std::string* error) {
  if (candidates_.empty()) {
    return Fail(error, family + ": no finite starting guess could be made from the data (" +
                           std::to_string(num_dropped_) + " candidates were not finite)");
  }
  std::stable_sort(candidates_.begin(), candidates_.end(),
                   [](const GuessCandidate& a, const GuessCandidate& b) { return a.rss < b.rss; });
  GuessResult result;
  for (const GuessCandidate& candidate : candidates_) {
    bool seen = false;
    for (const GuessCandidate& kept : result.candidates) seen = seen || kept.name == candidate.name;
    if (seen) continue;
    result.candidates.push_back(candidate);
    if (static_cast<int>(result.candidates.size()) >= options.max_candidates) break;
  }
  const Eigen::VectorXd& best = result.candidates.front().parameters;
  for (int j = 0; j < num_parameters_; ++j) {
    if (has_scale_[j]) continue;
    const double magnitude = std::abs(best[j]);
    scale_[j] = magnitude > 0 && std::isfinite(magnitude) ? magnitude : 1.0;
  }
  if (num_clamped_ > 0) {
    warnings_.push_back(std::to_string(num_clamped_) +
                        " candidate(s) had values outside the bounds and were moved inside");
  }
  result.lower = lower_;
  result.upper = upper_;
  result.scale = scale_;
  result.log_scale = log_scale_;
  for (const std::string& warning : warnings_) {
    if (std::find(result.warnings.begin(), result.warnings.end(), warning) ==
        result.warnings.end()) {
      result.warnings.push_back(warning);
    }
  }
  *out = std::move(result);
  return true;
}

bool IntersectBounds(const Model& model, const FamilyInstance& instance,
                     const Eigen::VectorXd& request_lower, const Eigen::VectorXd& request_upper,
                     Eigen::VectorXd* lower, Eigen::VectorXd* upper, std::string* error) {
  const int p = model.NumParameters();
  if (static_cast<int>(instance.parameters.size()) != p) {
    return Fail(error, "the model has " + std::to_string(p) + " parameters but the family " +
                           "lists " + std::to_string(instance.parameters.size()));
  }
  for (const Eigen::VectorXd* bound : {&request_lower, &request_upper}) {
    if (bound->size() != 0 && bound->size() != p) {
      return Fail(error, std::string(bound == &request_lower ? "lower" : "upper") +
                             " bounds: expected " + std::to_string(p) + " values, got " +
                             std::to_string(bound->size()));
    }
  }
  lower->resize(p);
  upper->resize(p);
  for (int j = 0; j < p; ++j) {
    const std::string& name = instance.parameters[j].name;
    double lo = instance.parameters[j].default_lower;
    double hi = instance.parameters[j].default_upper;
    if (request_lower.size() == p) {
      if (std::isnan(request_lower[j])) return Fail(error, "bounds." + name + ": lower is NaN");
      lo = std::max(lo, request_lower[j]);
    }
    if (request_upper.size() == p) {
      if (std::isnan(request_upper[j])) return Fail(error, "bounds." + name + ": upper is NaN");
      hi = std::min(hi, request_upper[j]);
    }
    if (!(lo <= hi)) {
      return Fail(error, "bounds." + name + ": [" + Number(lo) + ", " + Number(hi) +
                             "] is empty after intersecting with the family's default bounds [" +
                             Number(instance.parameters[j].default_lower) + ", " +
                             Number(instance.parameters[j].default_upper) + "]");
    }
    (*lower)[j] = lo;
    (*upper)[j] = hi;
  }
  return true;
}

}  // namespace guess
}  // namespace foothold
