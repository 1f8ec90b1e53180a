#include "engine/model/families/peak_models.h"

#include <algorithm>
#include <cmath>

#include "engine/model/families/internal/canonical_forms.h"
#include "engine/model/families/internal/vector_exp.h"

namespace foothold {
namespace {

constexpr double kLn2 = 0.69314718055994530942;
constexpr int kPeakSize = 3;  // height, center, width

// Points per block of the vectorised kernels: the block's scratch lives on the stack.
constexpr int kBlock = 256;

// Adds height*exp(-u^2/2), u = (x-center)/sigma, to values. When d_height is not null also
// writes the peak's three Jacobian columns. One (vectorised) exp per point, shared by the
// value and the Jacobian. For any profile of u the width derivative is u times the center
// derivative.
void AddGaussianPeak(const double* x, int n, double height, double center, double sigma,
                     double* values, double* d_height, double* d_center, double* d_sigma) {
  const double inv_sigma = 1.0 / sigma;
  double u[kBlock], exponent[kBlock], e[kBlock];
  for (int from = 0; from < n; from += kBlock) {
    const int len = std::min(kBlock, n - from);
    const double* xb = x + from;
    for (int i = 0; i < len; ++i) {
      u[i] = (xb[i] - center) * inv_sigma;
      exponent[i] = -0.5 * u[i] * u[i];
    }
    internal::VectorExp(exponent, e, len);
    double* vb = values + from;
    for (int i = 0; i < len; ++i) vb[i] += height * e[i];
    if (d_height == nullptr) continue;
    double* dh = d_height + from;
    double* dc = d_center + from;
    double* ds = d_sigma + from;
    for (int i = 0; i < len; ++i) {
      dh[i] = e[i];
      dc[i] = height * e[i] * u[i] * inv_sigma;
      ds[i] = dc[i] * u[i];
    }
  }
}

// Adds height*L, L = hwhm^2/((x-center)^2 + hwhm^2), to values, and optionally its columns:
// d/dcenter = 2 height L^2 (x-center)/hwhm^2, d/dhwhm = d/dcenter * (x-center)/hwhm.
void AddLorentzianPeak(const double* x, int n, double height, double center, double hwhm,
                       double* values, double* d_height, double* d_center, double* d_hwhm) {
  const double hwhm2 = hwhm * hwhm;
  if (d_height == nullptr) {
    for (int i = 0; i < n; ++i) {
      const double d = x[i] - center;
      values[i] += height * (hwhm2 / (d * d + hwhm2));
    }
    return;
  }
  const double inv_hwhm = 1.0 / hwhm;
  const double center_factor = 2.0 * height / hwhm2;
  for (int i = 0; i < n; ++i) {
    const double d = x[i] - center;
    const double shape = hwhm2 / (d * d + hwhm2);
    values[i] += height * shape;
    d_height[i] = shape;
    d_center[i] = center_factor * shape * shape * d;
    d_hwhm[i] = d_center[i] * d * inv_hwhm;
  }
}

void FillConstant(int n, double value, double* out) {
  for (int i = 0; i < n; ++i) out[i] = value;
}

std::vector<int> PeakLinearParameters(int num_peaks) {
  std::vector<int> linear;
  for (int peak = 0; peak < num_peaks; ++peak) linear.push_back(kPeakSize * peak);
  linear.push_back(kPeakSize * num_peaks);
  return linear;
}

// Members are the peaks (height, center, width); canonical order sorts by center.
std::vector<PermutationSymmetry> PeakSymmetries(int num_peaks) {
  if (num_peaks < 2) return {};
  PermutationSymmetry symmetry;
  for (int peak = 0; peak < num_peaks; ++peak) {
    const int first = kPeakSize * peak;
    symmetry.members.push_back({first, first + 1, first + 2});
  }
  symmetry.sort_position = 1;
  symmetry.location_position = 1;
  return {symmetry};
}

// Every peak's width (height, center, width) enters squared.
void CanonicalizePeakWidths(int num_peaks, const double* lower, const double* upper,
                            double* params) {
  for (int peak = 0; peak < num_peaks; ++peak) {
    family_math::CanonicalizeEvenSign(kPeakSize * peak + 2, lower, upper, params);
  }
}

using PeakKernel = void (*)(const double*, int, double, double, double, double*, double*, double*,
                            double*);

// Baseline plus k peaks of one shape. A width of exactly 0 leaves the model undefined.
bool ComputePeakSum(PeakKernel kernel, int num_peaks, const double* x, int n, const double* params,
                    double* values, double* jacobian) {
  for (int peak = 0; peak < num_peaks; ++peak) {
    if (params[kPeakSize * peak + 2] == 0.0) return false;
  }
  const int baseline_index = kPeakSize * num_peaks;
  FillConstant(n, params[baseline_index], values);
  for (int peak = 0; peak < num_peaks; ++peak) {
    const double* p = params + kPeakSize * peak;
    double* column =
        jacobian == nullptr ? nullptr : jacobian + static_cast<long>(kPeakSize) * peak * n;
    kernel(x, n, p[0], p[1], p[2], values, column, column ? column + n : nullptr,
           column ? column + 2L * n : nullptr);
  }
  if (jacobian != nullptr) {
    FillConstant(n, 1.0, jacobian + static_cast<long>(baseline_index) * n);
  }
  return true;
}

}  // namespace

GaussianModel::GaussianModel() : FamilyModel({"height", "center", "sigma", "baseline"}) {}

std::unique_ptr<Model> GaussianModel::Clone() const {
  return std::make_unique<GaussianModel>(*this);
}

void GaussianModel::CanonicalizeParameters(double* params, const double* lower,
                                           const double* upper) const {
  CanonicalizePeakWidths(1, lower, upper, params);
}

void GaussianModel::Compute(const double* x, int n, const double* params, double* values,
                            double* jacobian) const {
  if (!ComputePeakSum(AddGaussianPeak, 1, x, n, params, values, jacobian)) {
    FillNaN(n, values, jacobian);
  }
}

LorentzianModel::LorentzianModel() : FamilyModel({"height", "center", "hwhm", "baseline"}) {}

std::unique_ptr<Model> LorentzianModel::Clone() const {
  return std::make_unique<LorentzianModel>(*this);
}

void LorentzianModel::CanonicalizeParameters(double* params, const double* lower,
                                             const double* upper) const {
  CanonicalizePeakWidths(1, lower, upper, params);
}

void LorentzianModel::Compute(const double* x, int n, const double* params, double* values,
                              double* jacobian) const {
  if (!ComputePeakSum(AddLorentzianPeak, 1, x, n, params, values, jacobian)) {
    FillNaN(n, values, jacobian);
  }
}

PseudoVoigtModel::PseudoVoigtModel()
    : FamilyModel({"height", "center", "fwhm", "eta", "baseline"}) {}

std::unique_ptr<Model> PseudoVoigtModel::Clone() const {
  return std::make_unique<PseudoVoigtModel>(*this);
}

void PseudoVoigtModel::CanonicalizeParameters(double* params, const double* lower,
                                              const double* upper) const {
  family_math::CanonicalizeEvenSign(2, lower, upper, params);
}

void PseudoVoigtModel::Compute(const double* x, int n, const double* params, double* values,
                               double* jacobian) const {
  const double height = params[0];
  const double center = params[1];
  const double fwhm = params[2];
  const double eta = params[3];
  const double baseline = params[4];
  if (fwhm == 0.0) {
    FillNaN(n, values, jacobian);
    return;
  }
  const double inv_fwhm = 1.0 / fwhm;
  const double gauss_rate = 4.0 * kLn2;
  if (jacobian == nullptr) {
    for (int i = 0; i < n; ++i) {
      const double r = (x[i] - center) * inv_fwhm;
      const double gauss = std::exp(-gauss_rate * r * r);
      const double lorentz = 1.0 / (1.0 + 4.0 * r * r);
      values[i] = height * (eta * lorentz + (1.0 - eta) * gauss) + baseline;
    }
    return;
  }
  double* d_height = jacobian;
  double* d_center = jacobian + n;
  double* d_fwhm = jacobian + 2L * n;
  double* d_eta = jacobian + 3L * n;
  double* d_baseline = jacobian + 4L * n;
  // With r = (x-center)/w: dG/dcenter = 8 ln2 r G / w and dL/dcenter = 8 r L^2 / w.
  const double center_factor = 8.0 * height * inv_fwhm;
  for (int i = 0; i < n; ++i) {
    const double r = (x[i] - center) * inv_fwhm;
    const double gauss = std::exp(-gauss_rate * r * r);
    const double lorentz = 1.0 / (1.0 + 4.0 * r * r);
    const double shape = eta * lorentz + (1.0 - eta) * gauss;
    values[i] = height * shape + baseline;
    d_height[i] = shape;
    d_center[i] = center_factor * r * (eta * lorentz * lorentz + (1.0 - eta) * kLn2 * gauss);
    d_fwhm[i] = d_center[i] * r;
    d_eta[i] = height * (lorentz - gauss);
    d_baseline[i] = 1.0;
  }
}

MultiGaussianModel::MultiGaussianModel(int num_peaks)
    : FamilyModel(family_names::PeakParameterNames({"height", "center", "sigma"}, num_peaks)),
      num_peaks_(num_peaks) {}

std::vector<int> MultiGaussianModel::LinearParameters() const {
  return PeakLinearParameters(num_peaks_);
}

std::vector<PermutationSymmetry> MultiGaussianModel::Symmetries() const {
  return PeakSymmetries(num_peaks_);
}

std::unique_ptr<Model> MultiGaussianModel::Clone() const {
  return std::make_unique<MultiGaussianModel>(*this);
}

void MultiGaussianModel::CanonicalizeParameters(double* params, const double* lower,
                                                const double* upper) const {
  CanonicalizePeakWidths(num_peaks_, lower, upper, params);
}

void MultiGaussianModel::Compute(const double* x, int n, const double* params, double* values,
                                 double* jacobian) const {
  if (!ComputePeakSum(AddGaussianPeak, num_peaks_, x, n, params, values, jacobian)) {
    FillNaN(n, values, jacobian);
  }
}

MultiLorentzianModel::MultiLorentzianModel(int num_peaks)
    : FamilyModel(family_names::PeakParameterNames({"height", "center", "hwhm"}, num_peaks)),
      num_peaks_(num_peaks) {}

std::vector<int> MultiLorentzianModel::LinearParameters() const {
  return PeakLinearParameters(num_peaks_);
}

std::vector<PermutationSymmetry> MultiLorentzianModel::Symmetries() const {
  return PeakSymmetries(num_peaks_);
}

std::unique_ptr<Model> MultiLorentzianModel::Clone() const {
  return std::make_unique<MultiLorentzianModel>(*this);
}

void MultiLorentzianModel::CanonicalizeParameters(double* params, const double* lower,
                                                  const double* upper) const {
  CanonicalizePeakWidths(num_peaks_, lower, upper, params);
}

void MultiLorentzianModel::Compute(const double* x, int n, const double* params, double* values,
                                   double* jacobian) const {
  if (!ComputePeakSum(AddLorentzianPeak, num_peaks_, x, n, params, values, jacobian)) {
    FillNaN(n, values, jacobian);
  }
}

}  // namespace foothold
