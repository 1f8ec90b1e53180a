#pragma once
// Peak families: gaussian, lorentzian, pseudo_voigt and the sums of k gaussian or lorentzian
// peaks on a constant baseline. Heights and the baseline enter linearly.

#include <memory>
#include <vector>

#include "engine/model/families/family_model.h"

namespace foothold {

// Accepted peak counts of the multi_* families; the catalogue validates requests.
constexpr int kMinPeaks = 1;
constexpr int kMaxPeaks = 20;

// gaussian: height*exp(-(x-center)^2/(2 sigma^2)) + baseline.
// Parameters: height, center, sigma, baseline. sigma = 0 gives NaN.
class GaussianModel final : public FamilyModel {
 public:
  GaussianModel();
  std::vector<int> LinearParameters() const override { return {0, 3}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// lorentzian: height*hwhm^2/((x-center)^2 + hwhm^2) + baseline.
// Parameters: height, center, hwhm, baseline. hwhm = 0 gives NaN.
class LorentzianModel final : public FamilyModel {
 public:
  LorentzianModel();
  std::vector<int> LinearParameters() const override { return {0, 3}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// pseudo_voigt: height*(eta*L + (1-eta)*G) + baseline with unit-height profiles sharing the
// full width at half maximum w: G = exp(-4 ln2 (x-center)^2/w^2), L = 1/(1 + 4 (x-center)^2/w^2).
// Parameters: height, center, fwhm, eta, baseline. fwhm = 0 gives NaN.
class PseudoVoigtModel final : public FamilyModel {
 public:
  PseudoVoigtModel();
  std::vector<int> LinearParameters() const override { return {0, 4}; }
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;
};

// multi_gaussian: sum of k gaussians + baseline.
// Parameters: height1, center1, sigma1, ..., heightk, centerk, sigmak, baseline.
// Symmetry: the peaks may be permuted; canonical order sorts them by center.
class MultiGaussianModel final : public FamilyModel {
 public:
  explicit MultiGaussianModel(int num_peaks);
  int NumPeaks() const { return num_peaks_; }
  std::vector<int> LinearParameters() const override;
  std::vector<PermutationSymmetry> Symmetries() const override;
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;

 private:
  int num_peaks_;
};

// multi_lorentzian: sum of k lorentzians + baseline.
// Parameters: height1, center1, hwhm1, ..., heightk, centerk, hwhmk, baseline.
// Symmetry: the peaks may be permuted; canonical order sorts them by center.
class MultiLorentzianModel final : public FamilyModel {
 public:
  explicit MultiLorentzianModel(int num_peaks);
  int NumPeaks() const { return num_peaks_; }
  std::vector<int> LinearParameters() const override;
  std::vector<PermutationSymmetry> Symmetries() const override;
  void CanonicalizeParameters(double* params, const double* lower,
                              const double* upper) const override;
  std::unique_ptr<Model> Clone() const override;

 protected:
  void Compute(const double* x, int n, const double* params, double* values,
               double* jacobian) const override;

 private:
  int num_peaks_;
};

}  // namespace foothold
