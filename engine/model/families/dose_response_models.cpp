#include "engine/model/families/dose_response_models.h"

#include <algorithm>
#include <cmath>

#include "engine/model/families/internal/canonical_forms.h"
#include "engine/model/families/internal/logistic.h"

namespace foothold {

using family_math::kLn10;
using family_math::Logistic;
using family_math::LogisticPair;

Logistic4Model::Logistic4Model() : FamilyModel({"bottom", "top", "log_ec50", "hill"}) {}

std::unique_ptr<Model> Logistic4Model::Clone() const {
  return std::make_unique<Logistic4Model>(*this);
}

void Logistic4Model::CanonicalizeParameters(double* params, const double* lower,
                                            const double* upper) const {
  family_math::CanonicalizePlateaus(0, 1, 3, lower, upper, params);
}

void Logistic4Model::Compute(const double* x, int n, const double* params, double* values,
                             double* jacobian) const {
  const double bottom = params[0];
  const double top = params[1];
  const double log_ec50 = params[2];
  const double hill = params[3];
  const double span = top - bottom;
  // 10^((log_ec50 - x)*hill) = e^z with z = ln10*hill*(log_ec50 - x).
  const double rate = kLn10 * hill;
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      values[i] = bottom + span * Logistic(rate * (log_ec50 - x[i])).lower;
    }
    return;
  }
  double* d_bottom = jacobian;
  double* d_top = jacobian + n;
  double* d_log_ec50 = jacobian + 2L * n;
  double* d_hill = jacobian + 3L * n;
  for (int i = 0; i < n; ++i) {
    const double offset = log_ec50 - x[i];
    const LogisticPair f = Logistic(rate * offset);
    values[i] = bottom + span * f.lower;
    d_bottom[i] = f.upper;
    d_top[i] = f.lower;
    // d lower / dz = -lower*upper.
    const double slope = -span * f.lower * f.upper;
    d_log_ec50[i] = slope * rate;
    d_hill[i] = slope * kLn10 * offset;
  }
}

Logistic5Model::Logistic5Model()
    : FamilyModel({"bottom", "top", "log_ec50", "hill", "asymmetry"}) {}

std::unique_ptr<Model> Logistic5Model::Clone() const {
  return std::make_unique<Logistic5Model>(*this);
}

void Logistic5Model::Compute(const double* x, int n, const double* params, double* values,
                             double* jacobian) const {
  const double bottom = params[0];
  const double top = params[1];
  const double log_ec50 = params[2];
  const double hill = params[3];
  const double asymmetry = params[4];
  const double span = top - bottom;
  const double rate = kLn10 * hill;
  // (1 + e^z)^-s = exp(-s*softplus(z)), softplus(z) = max(z, 0) + log1p(e^-|z|): finite for
  // every z, so a steep curve far from its midpoint does not overflow.
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      const double z = rate * (log_ec50 - x[i]);
      const double softplus = std::max(z, 0.0) + std::log1p(std::exp(-std::abs(z)));
      values[i] = bottom + span * std::exp(-asymmetry * softplus);
    }
    return;
  }
  double* d_bottom = jacobian;
  double* d_top = jacobian + n;
  double* d_log_ec50 = jacobian + 2L * n;
  double* d_hill = jacobian + 3L * n;
  double* d_asymmetry = jacobian + 4L * n;
  for (int i = 0; i < n; ++i) {
    const double offset = log_ec50 - x[i];
    const double z = rate * offset;
    const double a = std::exp(-std::abs(z));
    const double softplus = std::max(z, 0.0) + std::log1p(a);
    const double shape = std::exp(-asymmetry * softplus);
    // sigma(z) = e^z/(1 + e^z), the derivative of softplus, from the same a.
    const double sigmoid = z >= 0.0 ? 1.0 / (1.0 + a) : a / (1.0 + a);
    values[i] = bottom + span * shape;
    d_bottom[i] = 1.0 - shape;
    d_top[i] = shape;
    const double slope = -span * asymmetry * shape * sigmoid;  // d f / dz
    d_log_ec50[i] = slope * rate;
    d_hill[i] = slope * kLn10 * offset;
    d_asymmetry[i] = -span * softplus * shape;
  }
}

MichaelisMentenModel::MichaelisMentenModel() : FamilyModel({"vmax", "km"}) {}

std::unique_ptr<Model> MichaelisMentenModel::Clone() const {
  return std::make_unique<MichaelisMentenModel>(*this);
}

void MichaelisMentenModel::Compute(const double* x, int n, const double* params, double* values,
                                   double* jacobian) const {
  const double vmax = params[0];
  const double km = params[1];
  if (km == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) values[i] = vmax * (x[i] / (km + x[i]));
    return;
  }
  double* d_vmax = jacobian;
  double* d_km = jacobian + n;
  for (int i = 0; i < n; ++i) {
    const double denominator = km + x[i];
    const double saturation = x[i] / denominator;
    values[i] = vmax * saturation;
    d_vmax[i] = saturation;
    d_km[i] = -vmax * saturation / denominator;
  }
}

HillBindingModel::HillBindingModel() : FamilyModel({"bmax", "kd", "n"}) {}

std::unique_ptr<Model> HillBindingModel::Clone() const {
  return std::make_unique<HillBindingModel>(*this);
}

void HillBindingModel::Compute(const double* x, int n, const double* params, double* values,
                               double* jacobian) const {
  const double bmax = params[0];
  const double kd = params[1];
  const double hill = params[2];
  if (!(kd > 0.0)) {
    FillNaN(n, values, jacobian);
    return;
  }
  // x^n/(kd^n + x^n) = 1/(1 + e^z), z = n*(ln kd - ln x). ln 0 = -inf gives the limits at
  // x = 0 (0 for n > 0), and ln of a negative x gives NaN.
  const double log_kd = std::log(kd);
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      values[i] = bmax * Logistic(hill * (log_kd - std::log(x[i]))).lower;
    }
    return;
  }
  double* d_bmax = jacobian;
  double* d_kd = jacobian + n;
  double* d_hill = jacobian + 2L * n;
  const double kd_factor = hill / kd;
  for (int i = 0; i < n; ++i) {
    const double log_ratio = log_kd - std::log(x[i]);
    const LogisticPair f = Logistic(hill * log_ratio);
    values[i] = bmax * f.lower;
    d_bmax[i] = f.lower;
    const double slope = -bmax * f.lower * f.upper;  // d f / dz
    d_kd[i] = slope * kd_factor;
    // slope*log_ratio -> 0 where the logistic saturates (x -> 0 gives log_ratio = inf).
    d_hill[i] = slope == 0.0 ? 0.0 : slope * log_ratio;
  }
}

}  // namespace foothold
