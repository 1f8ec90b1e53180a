#include "heuristics/signal/savitzky_golay.h"

#include <Eigen/Cholesky>
#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/noise.h"

namespace foothold {
namespace signal {
namespace {

constexpr int kMinOrder = 2;
constexpr int kMaxOrder = 4;
// SavitzkyGolayWeights accepts higher orders than the smoother; beyond this the monomial
// Gram matrix is too ill-conditioned to trust.
constexpr int kMaxWeightsOrder = 8;
// Growth factor of the automatic half-window search.
constexpr double kWindowGrowth = 1.25;

// Rows d = 0..2 of (V^T V)^-1 V^T for the local Vandermonde matrix V: the weights of the
// value and the first two Taylor coefficients, as SavitzkyGolayWeights returns them (the
// smoother itself solves with the Gram matrix directly: FitWindow below).
struct LocalWeights {
  Eigen::MatrixXd rows;  // 3 x w (rows beyond the order are zero)
  double scale = 1.0;    // s in t = (x - x_eval) / s
  Eigen::VectorXd t;
  Eigen::VectorXd power_sums;
  Eigen::MatrixXd gram;
  Eigen::MatrixXd inverse;
  Eigen::LDLT<Eigen::MatrixXd> ldlt;
};

// Fills `out` for the w window abscissae evaluated at x_eval. Returns false if the Gram
// matrix is numerically singular (too few distinct x for the order).
bool ComputeLocalWeights(const double* window_x, Eigen::Index w, double x_eval, int order,
                         LocalWeights* out) {
  double scale = 0.0;
  for (Eigen::Index j = 0; j < w; ++j) scale = std::max(scale, std::abs(window_x[j] - x_eval));
  if (!(scale > 0.0)) return false;
  const int p = order + 1;
  // V^T V is the Hankel matrix of the power sums sum_j t_j^m, m = 0..2 order.
  out->t.resize(w);
  out->power_sums.setZero(2 * p - 1);
  for (Eigen::Index j = 0; j < w; ++j) {
    const double t = (window_x[j] - x_eval) / scale;
    out->t[j] = t;
    double power = 1.0;
    for (int m = 0; m < 2 * p - 1; ++m, power *= t) out->power_sums[m] += power;
  }
  out->gram.resize(p, p);
  for (int a = 0; a < p; ++a) {
    for (int b = 0; b < p; ++b) out->gram(a, b) = out->power_sums[a + b];
  }
  out->ldlt.compute(out->gram);
  if (out->ldlt.info() != Eigen::Success ||
      out->ldlt.rcond() < 1e3 * std::numeric_limits<double>::epsilon()) {
    return false;
  }
  out->inverse = out->ldlt.solve(Eigen::MatrixXd::Identity(p, p));
  const int num_rows = std::min(3, p);
  out->rows.setZero(3, w);
  for (Eigen::Index j = 0; j < w; ++j) {
    double power = 1.0;
    for (int k = 0; k < p; ++k, power *= out->t[j]) {
      for (int d = 0; d < num_rows; ++d) out->rows(d, j) += out->inverse(d, k) * power;
    }
  }
  out->scale = scale;
  return true;
}

// Window [lo, lo + 2h] holding i, slid inward at the ends.
Eigen::Index WindowStart(Eigen::Index i, Eigen::Index h, Eigen::Index n) {
  return std::clamp<Eigen::Index>(i - h, 0, n - 1 - 2 * h);
}

// The smoother needs only the local polynomial's coefficients c = G^-1 V^T y and the
// leverage e_0^T G^-1 v(t_i), so it solves with the small Gram matrix G = V^T V directly
// instead of forming the 3 x w weight rows (the same numbers: rows y = G^-1 V^T y). G has at
// most 5 rows; a plain Cholesky factorisation on the stack costs a few hundred instructions
// where a general-purpose one costs thousands, and the smoother runs it for every point of
// every trial window.
constexpr int kMaxTerms = kMaxOrder + 1;
// A Cholesky pivot below this share of G_00 = w (the largest entry: |t| <= 1) means too few
// distinct x in the window for the order.
constexpr double kMinPivotShare = 1e3 * std::numeric_limits<double>::epsilon();

struct WindowFit {
  double value = 0.0;
  double first_derivative = 0.0;
  double second_derivative = 0.0;
  double leverage = 0.0;  // weight of y_i in its own smoothed value
};

// G = L L^T for the p x p Hankel matrix of power_sums, L in the lower triangle of `l`.
template <int p>
bool FactorGram(const double* power_sums, double l[kMaxTerms][kMaxTerms]) {
  const double min_pivot = kMinPivotShare * power_sums[0];
  for (int r = 0; r < p; ++r) {
    for (int c = 0; c <= r; ++c) {
      double sum = power_sums[r + c];
      for (int k = 0; k < c; ++k) sum -= l[r][k] * l[c][k];
      if (r == c) {
        if (!(sum > min_pivot)) return false;
        l[r][r] = std::sqrt(sum);
      } else {
        l[r][c] = sum / l[c][c];
      }
    }
  }
  return true;
}

// The local polynomial with p terms (degree p - 1) through the w points at window_x /
// window_y, in t = (x - x_self) / s, evaluated at window_x[self]. False when G is
// numerically singular. p is a template argument so that the small loops unroll.
template <int p>
bool FitWindow(const double* window_x, const double* window_y, Eigen::Index w, Eigen::Index self,
               WindowFit* out) {
  const double x_eval = window_x[self];
  // x is increasing, so the farthest point from x_eval is one of the window's ends.
  const double scale = std::max(x_eval - window_x[0], window_x[w - 1] - x_eval);
  if (!(scale > 0.0)) return false;
  const double inverse_scale = 1.0 / scale;
  double power_sums[2 * kMaxTerms - 1] = {};
  double moments[kMaxTerms] = {};
  for (Eigen::Index j = 0; j < w; ++j) {
    const double t = (window_x[j] - x_eval) * inverse_scale;
    double power = 1.0;
    for (int m = 0; m < p; ++m, power *= t) {
      power_sums[m] += power;
      moments[m] += power * window_y[j];
    }
    for (int m = p; m < 2 * p - 1; ++m, power *= t) power_sums[m] += power;
  }
  double l[kMaxTerms][kMaxTerms];
  if (!FactorGram<p>(power_sums, l)) return false;
  // c = L^-T L^-1 moments; (G^-1)_00 = |L^-1 e_0|^2 since t is centred on x_i (v(t_i) = e_0).
  double z[kMaxTerms], e[kMaxTerms];
  double leverage = 0.0;
  for (int r = 0; r < p; ++r) {
    double sum_z = moments[r], sum_e = r == 0 ? 1.0 : 0.0;
    for (int k = 0; k < r; ++k) {
      sum_z -= l[r][k] * z[k];
      sum_e -= l[r][k] * e[k];
    }
    z[r] = sum_z / l[r][r];
    e[r] = sum_e / l[r][r];
    leverage += e[r] * e[r];
  }
  double c[kMaxTerms];
  for (int r = p - 1; r >= 0; --r) {
    double sum = z[r];
    for (int k = r + 1; k < p; ++k) sum -= l[k][r] * c[k];
    c[r] = sum / l[r][r];
  }
  out->value = c[0];
  out->leverage = leverage;
  // The Taylor coefficients c1, c2 of p(t) give dy/dx = c1 / s and d2y/dx2 = 2 c2 / s^2.
  out->first_derivative = c[1] * inverse_scale;
  out->second_derivative = 2.0 * c[2] * inverse_scale * inverse_scale;
  return true;
}

// One pass of the smoother with p terms. With derivatives == false only value and leverage
// are filled.
template <int p>
bool SmoothPassOfOrder(const Eigen::VectorXd& x, const Eigen::VectorXd& y, Eigen::Index h,
                       bool derivatives, SmoothedCurve* out, Eigen::VectorXd* leverage) {
  const Eigen::Index n = x.size();
  const Eigen::Index w = 2 * h + 1;
  out->value.resize(n);
  if (derivatives) {
    out->first_derivative.resize(n);
    out->second_derivative.resize(n);
  }
  if (leverage) leverage->resize(n);
  WindowFit fit;
  for (Eigen::Index i = 0; i < n; ++i) {
    const Eigen::Index lo = WindowStart(i, h, n);
    if (!FitWindow<p>(x.data() + lo, y.data() + lo, w, i - lo, &fit)) return false;
    out->value[i] = fit.value;
    if (leverage) (*leverage)[i] = fit.leverage;
    if (derivatives) {
      out->first_derivative[i] = fit.first_derivative;
      out->second_derivative[i] = fit.second_derivative;
    }
  }
  return true;
}

// One pass of the smoother. With derivatives == false only value and leverage are filled.
bool SmoothPass(const Eigen::VectorXd& x, const Eigen::VectorXd& y, int order, Eigen::Index h,
                bool derivatives, SmoothedCurve* out, Eigen::VectorXd* leverage) {
  static_assert(kMinOrder == 2 && kMaxOrder == 4, "one instantiation per supported order");
  switch (order) {
    case 2:
      return SmoothPassOfOrder<3>(x, y, h, derivatives, out, leverage);
    case 3:
      return SmoothPassOfOrder<4>(x, y, h, derivatives, out, leverage);
    default:
      return SmoothPassOfOrder<5>(x, y, h, derivatives, out, leverage);
  }
}

}  // namespace

bool SavitzkyGolayOptions::Validate(std::string* error) const {
  std::ostringstream text;
  if (polynomial_order < kMinOrder || polynomial_order > kMaxOrder) {
    text << "polynomial_order = " << polynomial_order << ": must be between " << kMinOrder
         << " and " << kMaxOrder;
  } else if (half_window != 0 && half_window < MinHalfWindow()) {
    text << "half_window = " << half_window << ": must be 0 (automatic) or >= " << MinHalfWindow()
         << " for polynomial_order " << polynomial_order;
  } else if (max_auto_half_window < 2) {
    text << "max_auto_half_window = " << max_auto_half_window << ": must be >= 2";
  } else if (!std::isfinite(noise_sigma)) {
    text << "noise_sigma = " << noise_sigma << ": must be finite (< 0 to estimate it)";
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

SmoothedCurve SmoothSavitzkyGolay(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                                  const SavitzkyGolayOptions& options) {
  SmoothedCurve out;
  out.polynomial_order = options.polynomial_order;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  internal::CurveRequirements requirements;
  requirements.needs_y_variation = false;
  out.status = internal::CheckCurve(x, y, requirements, &out.message);
  if (!out.IsOk()) return out;

  const Eigen::Index n = x.size();
  const int h_min = options.MinHalfWindow();
  const int h_needed = options.half_window > 0 ? options.half_window : h_min;
  if (2 * h_needed + 1 > n) {
    out.status = SignalStatus::kTooFewPoints;
    std::ostringstream text;
    text << n << " points: half_window " << h_needed << " needs at least " << 2 * h_needed + 1;
    out.message = text.str();
    return out;
  }

  Eigen::Index chosen = h_needed;
  if (options.half_window == 0) {
    out.is_auto_window = true;
    out.noise_sigma = options.noise_sigma;
    if (out.noise_sigma < 0.0) {
      const NoiseEstimate noise = EstimateNoise(x, y);
      out.noise_sigma = noise.IsOk() ? noise.sigma : 0.0;  // constant y: no noise
    }
    const double variance = out.noise_sigma * out.noise_sigma;
    const Eigen::Index h_max = std::min<Eigen::Index>(options.max_auto_half_window, (n - 1) / 2);
    double best_risk = std::numeric_limits<double>::infinity();
    SmoothedCurve trial;
    Eigen::VectorXd leverage;
    for (Eigen::Index h = h_min; h <= h_max;
         h = std::max<Eigen::Index>(h + 1, std::lround(kWindowGrowth * h))) {
      if (!SmoothPass(x, y, options.polynomial_order, h, false, &trial, &leverage)) break;
      // Mallows' Cp / SURE for a linear smoother.
      const double risk =
          (y - trial.value).squaredNorm() / n - variance + 2.0 * variance * leverage.mean();
      if (risk < best_risk) {
        best_risk = risk;
        chosen = h;
      }
    }
    out.estimated_risk = best_risk;
  }
  out.half_window = static_cast<int>(chosen);
  if (!SmoothPass(x, y, options.polynomial_order, chosen, true, &out, nullptr)) {
    out.status = SignalStatus::kRankDeficient;
    out.message = "a smoothing window has too few distinct x values for the polynomial order";
  }
  return out;
}

bool SavitzkyGolayWeights(const Eigen::VectorXd& window_x, double x_eval, int order, int derivative,
                          Eigen::VectorXd* weights, std::string* error) {
  std::ostringstream text;
  if (order < 0 || order > kMaxWeightsOrder || derivative < 0 || derivative > order ||
      derivative > 2) {
    text << "derivative = " << derivative << ", order = " << order
         << ": need 0 <= order <= " << kMaxWeightsOrder << " and 0 <= derivative <= min(order, 2)";
  } else if (window_x.size() < order + 1 || !window_x.allFinite()) {
    text << "window of " << window_x.size() << " finite x values: need at least " << order + 1;
  }
  LocalWeights local;
  if (text.tellp() == 0 &&
      !ComputeLocalWeights(window_x.data(), window_x.size(), x_eval, order, &local)) {
    text << "window x values are not distinct enough for a degree " << order << " polynomial";
  }
  if (text.tellp() != 0) {
    if (error) *error = text.str();
    return false;
  }
  // d-th derivative of sum c_k t^k at t = 0 is d! c_d, and dt/dx = 1 / s.
  const double factorial = derivative == 2 ? 2.0 : 1.0;
  *weights = local.rows.row(derivative).transpose() * factorial /
             std::pow(local.scale, static_cast<double>(derivative));
  return true;
}

}  // namespace signal
}  // namespace foothold
