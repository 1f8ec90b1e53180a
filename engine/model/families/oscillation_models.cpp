#include "engine/model/families/oscillation_models.h"

#include <cmath>

#include "engine/model/families/internal/canonical_forms.h"

namespace foothold {
namespace {

constexpr double kTwoPi = 6.28318530717958647693;

}  // namespace

SineModel::SineModel() : FamilyModel({"amplitude", "frequency", "phase", "baseline"}) {}

std::unique_ptr<Model> SineModel::Clone() const { return std::make_unique<SineModel>(*this); }

void SineModel::CanonicalizeParameters(double* params, const double* lower,
                                       const double* upper) const {
  family_math::CanonicalizeOscillation(0, 1, 2, lower, upper, params);
}

void SineModel::Compute(const double* x, int n, const double* params, double* values,
                        double* jacobian) const {
  const double amplitude = params[0];
  const double angular = kTwoPi * params[1];
  const double phase = params[2];
  const double baseline = params[3];
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) values[i] = amplitude * std::sin(angular * x[i] + phase) + baseline;
    return;
  }
  double* d_amplitude = jacobian;
  double* d_frequency = jacobian + n;
  double* d_phase = jacobian + 2L * n;
  double* d_baseline = jacobian + 3L * n;
  for (int i = 0; i < n; ++i) {
    const double angle = angular * x[i] + phase;
    const double sine = std::sin(angle);
    const double cosine = std::cos(angle);
    values[i] = amplitude * sine + baseline;
    d_amplitude[i] = sine;
    d_phase[i] = amplitude * cosine;
    d_frequency[i] = d_phase[i] * kTwoPi * x[i];
    d_baseline[i] = 1.0;
  }
}

DampedSineModel::DampedSineModel()
    : FamilyModel({"amplitude", "tau", "frequency", "phase", "baseline"}) {}

std::unique_ptr<Model> DampedSineModel::Clone() const {
  return std::make_unique<DampedSineModel>(*this);
}

void DampedSineModel::CanonicalizeParameters(double* params, const double* lower,
                                             const double* upper) const {
  family_math::CanonicalizeOscillation(0, 2, 3, lower, upper, params);
}

void DampedSineModel::Compute(const double* x, int n, const double* params, double* values,
                              double* jacobian) const {
  const double amplitude = params[0];
  const double tau = params[1];
  const double angular = kTwoPi * params[2];
  const double phase = params[3];
  const double baseline = params[4];
  if (tau == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  const double rate = 1.0 / tau;
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      const double envelope = amplitude * std::exp(-x[i] * rate);
      values[i] = envelope * std::sin(angular * x[i] + phase) + baseline;
    }
    return;
  }
  double* d_amplitude = jacobian;
  double* d_tau = jacobian + n;
  double* d_frequency = jacobian + 2L * n;
  double* d_phase = jacobian + 3L * n;
  double* d_baseline = jacobian + 4L * n;
  for (int i = 0; i < n; ++i) {
    const double decay = std::exp(-x[i] * rate);
    const double envelope = amplitude * decay;
    const double angle = angular * x[i] + phase;
    const double sine = std::sin(angle);
    const double cosine = std::cos(angle);
    values[i] = envelope * sine + baseline;
    d_amplitude[i] = decay * sine;
    // d exp(-x/tau)/dtau = exp(-x/tau)*x/tau^2.
    d_tau[i] = envelope * sine * x[i] * rate * rate;
    d_phase[i] = envelope * cosine;
    d_frequency[i] = d_phase[i] * kTwoPi * x[i];
    d_baseline[i] = 1.0;
  }
}

}  // namespace foothold
