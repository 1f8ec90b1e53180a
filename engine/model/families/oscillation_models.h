#pragma once
// Oscillation families: sine and damped_sine, with the frequency in cycles per unit of x.
// Their symmetries are not permutations: phase + 2*pi is the same curve, (amplitude, phase)
// ~ (-amplitude, phase + pi) and (amplitude, frequency, phase) ~ (-amplitude, -frequency,
// -phase). CanonicalizeParameters picks frequency >= 0, amplitude >= 0 and the phase in
// [-pi, pi) (or the first 2*pi inside narrower bounds).

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// sine: amplitude*sin(2*pi*frequency*x + phase) + baseline.
// Parameters: amplitude, frequency, phase, baseline.
class SineModel final : public FamilyModel {
 public:
  SineModel();
  std::vector<int> LinearParameters() const override { return {0, 3}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// damped_sine: amplitude*exp(-x/tau)*sin(2*pi*frequency*x + phase) + baseline.
// Parameters: amplitude, tau, frequency, phase, baseline. tau = 0 gives NaN.
class DampedSineModel final : public FamilyModel {
 public:
  DampedSineModel();
  std::vector<int> LinearParameters() const override { return {0, 4}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

}  // namespace foothold
