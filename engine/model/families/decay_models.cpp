#include "engine/model/families/decay_models.h"

#include <algorithm>
#include <cmath>

#include "engine/model/families/internal/vector_exp.h"

namespace foothold {
namespace {

// Points per block of the vectorised kernel: the block's scratch lives on the stack.
constexpr int kBlock = 256;

// Adds amplitude*exp(-x/tau) to values; when d_amplitude is not null also writes
// d/damplitude = e and d/dtau = amplitude*e*x/tau^2. One (vectorised) exp per point.
void AddExponential(const double* x, int n, double amplitude, double tau, double* values,
                    double* d_amplitude, double* d_tau) {
  const double rate = 1.0 / tau;
  const double tau_factor = amplitude * rate * rate;
  double exponent[kBlock], e[kBlock];
  for (int from = 0; from < n; from += kBlock) {
    const int len = std::min(kBlock, n - from);
    const double* xb = x + from;
    for (int i = 0; i < len; ++i) exponent[i] = -xb[i] * rate;
    internal::VectorExp(exponent, e, len);
    double* vb = values + from;
    for (int i = 0; i < len; ++i) vb[i] += amplitude * e[i];
    if (d_amplitude == nullptr) continue;
    double* da = d_amplitude + from;
    double* dt = d_tau + from;
    for (int i = 0; i < len; ++i) {
      da[i] = e[i];
      dt[i] = tau_factor * e[i] * xb[i];
    }
  }
}

void FillConstant(int n, double value, double* out) {
  for (int i = 0; i < n; ++i) out[i] = value;
}

}  // namespace

ExpDecayModel::ExpDecayModel() : FamilyModel({"amplitude", "tau", "baseline"}) {}

std::unique_ptr<Model> ExpDecayModel::Clone() const {
  return std::make_unique<ExpDecayModel>(*this);
}

void ExpDecayModel::Compute(const double* x, int n, const double* params, double* values,
                            double* jacobian) const {
  if (params[1] == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  FillConstant(n, params[2], values);
  AddExponential(x, n, params[0], params[1], values, jacobian, jacobian ? jacobian + n : nullptr);
  if (jacobian != nullptr) FillConstant(n, 1.0, jacobian + 2L * n);
}

BiexpDecayModel::BiexpDecayModel()
    : FamilyModel({"amplitude1", "tau1", "amplitude2", "tau2", "baseline"}) {}

std::vector<PermutationSymmetry> BiexpDecayModel::Symmetries() const {
  PermutationSymmetry symmetry;
  symmetry.members = {{0, 1}, {2, 3}};
  symmetry.sort_position = 1;
  return {symmetry};
}

std::unique_ptr<Model> BiexpDecayModel::Clone() const {
  return std::make_unique<BiexpDecayModel>(*this);
}

void BiexpDecayModel::Compute(const double* x, int n, const double* params, double* values,
                              double* jacobian) const {
  if (params[1] == 0.0 || params[3] == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  FillConstant(n, params[4], values);
  AddExponential(x, n, params[0], params[1], values, jacobian, jacobian ? jacobian + n : nullptr);
  AddExponential(x, n, params[2], params[3], values, jacobian ? jacobian + 2L * n : nullptr,
                 jacobian ? jacobian + 3L * n : nullptr);
  if (jacobian != nullptr) FillConstant(n, 1.0, jacobian + 4L * n);
}

StretchedExpModel::StretchedExpModel() : FamilyModel({"amplitude", "tau", "beta", "baseline"}) {}

std::unique_ptr<Model> StretchedExpModel::Clone() const {
  return std::make_unique<StretchedExpModel>(*this);
}

void StretchedExpModel::Compute(const double* x, int n, const double* params, double* values,
                                double* jacobian) const {
  const double amplitude = params[0];
  const double tau = params[1];
  const double beta = params[2];
  const double baseline = params[3];
  if (tau == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  const double inv_tau = 1.0 / tau;
  // q = (x/tau)^beta = exp(beta*ln(x/tau)): ln(0) = -inf gives q = 0 for beta > 0, and a
  // negative x gives NaN through the logarithm.
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      const double q = std::exp(beta * std::log(x[i] * inv_tau));
      values[i] = amplitude * std::exp(-q) + baseline;
    }
    return;
  }
  double* d_amplitude = jacobian;
  double* d_tau = jacobian + n;
  double* d_beta = jacobian + 2L * n;
  double* d_baseline = jacobian + 3L * n;
  for (int i = 0; i < n; ++i) {
    const double log_ratio = std::log(x[i] * inv_tau);
    const double q = std::exp(beta * log_ratio);
    const double e = std::exp(-q);
    values[i] = amplitude * e + baseline;
    d_amplitude[i] = e;
    // dq/dtau = -beta*q/tau and dq/dbeta = q*ln(x/tau); q*ln(x/tau) -> 0 as q -> 0.
    d_tau[i] = amplitude * e * q * beta * inv_tau;
    d_beta[i] = q == 0.0 ? 0.0 : -amplitude * e * q * log_ratio;
    d_baseline[i] = 1.0;
  }
}

}  // namespace foothold
