#include "engine/model/families/growth_models.h"

#include <cmath>
#include <limits>

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

}  // namespace

PowerLawModel::PowerLawModel() : FamilyModel({"prefactor", "exponent"}) {}

std::unique_ptr<Model> PowerLawModel::Clone() const {
  return std::make_unique<PowerLawModel>(*this);
}

void PowerLawModel::Compute(const double* x, int n, const double* params, double* values,
                            double* jacobian) const {
  const double prefactor = params[0];
  const double exponent = params[1];
  // std::pow is NaN for a negative base with a non-integer exponent, as wanted.
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) values[i] = prefactor * std::pow(x[i], exponent);
    return;
  }
  double* d_prefactor = jacobian;
  double* d_exponent = jacobian + n;
  // x^k*ln x -> 0 as x -> 0 for k > 0; for k <= 0 the exponent derivative is unbounded.
  const double exponent_at_zero = exponent > 0.0 ? 0.0 : kNaN;
  for (int i = 0; i < n; ++i) {
    const double power = std::pow(x[i], exponent);
    values[i] = prefactor * power;
    d_prefactor[i] = power;
    d_exponent[i] = x[i] == 0.0 ? exponent_at_zero : prefactor * power * std::log(std::abs(x[i]));
  }
}

GompertzModel::GompertzModel() : FamilyModel({"asymptote", "displacement", "rate"}) {}

std::unique_ptr<Model> GompertzModel::Clone() const {
  return std::make_unique<GompertzModel>(*this);
}

void GompertzModel::Compute(const double* x, int n, const double* params, double* values,
                            double* jacobian) const {
  const double asymptote = params[0];
  const double displacement = params[1];
  const double rate = params[2];
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      values[i] = asymptote * std::exp(-std::exp(displacement - rate * x[i]));
    }
    return;
  }
  double* d_asymptote = jacobian;
  double* d_displacement = jacobian + n;
  double* d_rate = jacobian + 2L * n;
  for (int i = 0; i < n; ++i) {
    const double inner = std::exp(displacement - rate * x[i]);
    const double outer = std::exp(-inner);
    values[i] = asymptote * outer;
    d_asymptote[i] = outer;
    // inner*exp(-inner) -> 0 when inner overflows to inf (outer is then exactly 0).
    const double slope = outer == 0.0 ? 0.0 : -asymptote * outer * inner;  // d f / d inner
    d_displacement[i] = slope;
    d_rate[i] = -slope * x[i];
  }
}

ArrheniusModel::ArrheniusModel() : FamilyModel({"prefactor", "ea"}) {}

std::unique_ptr<Model> ArrheniusModel::Clone() const {
  return std::make_unique<ArrheniusModel>(*this);
}

void ArrheniusModel::Compute(const double* x, int n, const double* params, double* values,
                             double* jacobian) const {
  const double prefactor = params[0];
  const double ea_over_r = params[1] / kGasConstant;
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      values[i] = x[i] > 0.0 ? prefactor * std::exp(-ea_over_r / x[i]) : kNaN;
    }
    return;
  }
  double* d_prefactor = jacobian;
  double* d_ea = jacobian + n;
  for (int i = 0; i < n; ++i) {
    if (!(x[i] > 0.0)) {
      values[i] = d_prefactor[i] = d_ea[i] = kNaN;
      continue;
    }
    const double boltzmann = std::exp(-ea_over_r / x[i]);
    values[i] = prefactor * boltzmann;
    d_prefactor[i] = boltzmann;
    d_ea[i] = -prefactor * boltzmann / (kGasConstant * x[i]);
  }
}

}  // namespace foothold
