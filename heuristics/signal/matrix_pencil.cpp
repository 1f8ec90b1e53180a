// GCC reports a false "may be used uninitialized" inside Eigen 3.4's triangular kernels,
// which BDCSVD and EigenSolver instantiate; the warning is about Eigen, not this file.
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic ignored "-Wmaybe-uninitialized"
#endif

#include "heuristics/signal/matrix_pencil.h"

#include <Eigen/Eigenvalues>
#include <Eigen/QR>
#include <Eigen/SVD>
#include <algorithm>
#include <cmath>
#include <sstream>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/internal/robust_stats.h"
#include "heuristics/signal/linear_fit.h"

namespace foothold {
namespace signal {
namespace {

constexpr int kMaxExponentials = 8;
constexpr int kMaxReportedSingularValues = 10;
constexpr double kPi = 3.141592653589793;

// Returns true when x is evenly spaced to `tolerance` (relative to the median spacing).
bool IsEven(const Eigen::VectorXd& x, double tolerance) {
  std::vector<double> spacings(static_cast<size_t>(x.size() - 1));
  for (Eigen::Index i = 0; i + 1 < x.size(); ++i) spacings[i] = x[i + 1] - x[i];
  const double median = internal::Median(spacings);
  for (double s : spacings) {
    if (std::abs(s - median) > tolerance * median) return false;
  }
  return true;
}

// Means of y over num_bins equal bins spanning [x0, xn], placed at the bin centres; an empty
// bin takes the interpolated value at its centre. The mean of an exponential over a bin is
// its value at the centre times a factor that is the same for every bin (to the extent the
// points fill the bins alike), so the poles survive while the noise is averaged down.
Eigen::VectorXd BinAverages(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                            Eigen::Index num_bins, double* spacing) {
  const Eigen::Index n = x.size();
  const double width = (x[n - 1] - x[0]) / static_cast<double>(num_bins);
  Eigen::VectorXd sums = Eigen::VectorXd::Zero(num_bins);
  Eigen::VectorXi counts = Eigen::VectorXi::Zero(num_bins);
  for (Eigen::Index i = 0; i < n; ++i) {
    const Eigen::Index bin =
        std::min<Eigen::Index>(num_bins - 1, static_cast<Eigen::Index>((x[i] - x[0]) / width));
    sums[bin] += y[i];
    ++counts[bin];
  }
  Eigen::VectorXd samples(num_bins);
  for (Eigen::Index j = 0; j < num_bins; ++j) {
    samples[j] = counts[j] > 0 ? sums[j] / counts[j]
                               : internal::InterpolateLinear(x, y, x[0] + (j + 0.5) * width);
  }
  *spacing = width;
  return samples;
}

}  // namespace

bool MatrixPencilOptions::Validate(std::string* error) const {
  std::ostringstream text;
  if (num_exponentials < 1 || num_exponentials > kMaxExponentials) {
    text << "num_exponentials = " << num_exponentials << ": must be between 1 and "
         << kMaxExponentials;
  } else if (!(pencil_fraction >= 0.2 && pencil_fraction <= 0.5)) {
    text << "pencil_fraction = " << pencil_fraction << ": must be in [0.2, 0.5]";
  } else if (max_samples < 16) {
    text << "max_samples = " << max_samples << ": must be >= 16";
  } else if (!(even_tolerance >= 0.0 && even_tolerance < 0.1)) {
    text << "even_tolerance = " << even_tolerance << ": must be in [0, 0.1)";
  } else if (!(max_pole_angle >= 0.0 && max_pole_angle < kPi)) {
    text << "max_pole_angle = " << max_pole_angle << ": must be in [0, pi)";
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

ExponentialSum FitExponentialSum(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                                 const MatrixPencilOptions& options) {
  ExponentialSum out;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  const int k = options.num_exponentials;
  const int num_poles = k + (options.fit_offset ? 1 : 0);
  internal::CurveRequirements requirements;
  requirements.min_points = 2 * num_poles + 2;
  out.status = internal::CheckCurve(x, y, requirements, &out.message);
  if (!out.IsOk()) {
    if (out.status == SignalStatus::kTooFewPoints) {
      out.message += " (" + std::to_string(num_poles) + " poles)";
    }
    return out;
  }

  // The even grid the pencil works on.
  const Eigen::Index n = x.size();
  const bool is_even = IsEven(x, options.even_tolerance);
  Eigen::VectorXd samples = y;
  out.sample_spacing = (x[n - 1] - x[0]) / static_cast<double>(n - 1);
  if (n > options.max_samples && is_even) {
    // Means of m consecutive points: exactly even again, spacing m D.
    const Eigen::Index m = (n + options.max_samples - 1) / options.max_samples;
    samples.resize(n / m);
    for (Eigen::Index j = 0; j < samples.size(); ++j) samples[j] = y.segment(j * m, m).mean();
    out.sample_spacing *= static_cast<double>(m);
  } else if (n > options.max_samples) {
    samples = BinAverages(x, y, options.max_samples, &out.sample_spacing);
  } else if (!is_even) {
    out.sample_spacing = (x[n - 1] - x[0]) / static_cast<double>(n - 1);
    const Eigen::VectorXd grid = Eigen::VectorXd::LinSpaced(n, x[0], x[n - 1]);
    for (Eigen::Index j = 0; j < n; ++j) samples[j] = internal::InterpolateLinear(x, y, grid[j]);
  }
  out.was_resampled = n > options.max_samples || !is_even;
  const Eigen::Index num_samples = samples.size();
  out.num_samples = static_cast<int>(num_samples);

  const Eigen::Index pencil = std::clamp<Eigen::Index>(
      std::lround(options.pencil_fraction * num_samples), num_poles, num_samples - num_poles - 1);
  Eigen::MatrixXd hankel(num_samples - pencil, pencil + 1);
  for (Eigen::Index i = 0; i < hankel.rows(); ++i) {
    hankel.row(i) = samples.segment(i, pencil + 1).transpose();
  }
  Eigen::BDCSVD<Eigen::MatrixXd> svd(hankel, Eigen::ComputeThinV);
  const Eigen::VectorXd& sigma = svd.singularValues();
  out.singular_values =
      sigma.head(std::min<Eigen::Index>(sigma.size(), kMaxReportedSingularValues));
  const Eigen::MatrixXd signal_space = svd.matrixV().leftCols(num_poles);
  const Eigen::MatrixXd v1 = signal_space.topRows(pencil);
  const Eigen::MatrixXd v2 = signal_space.bottomRows(pencil);
  const Eigen::MatrixXd shift = v1.householderQr().solve(v2);  // pinv(V1) V2, V1 has full rank
  const Eigen::VectorXcd poles = Eigen::EigenSolver<Eigen::MatrixXd>(shift).eigenvalues();
  out.pole_real = poles.real();
  out.pole_imag = poles.imag();

  // With an offset, the pole nearest z = 1 stands for the constant.
  Eigen::Index offset_pole = -1;
  if (options.fit_offset) {
    (poles.array() - 1.0).abs().minCoeff(&offset_pole);
  }
  std::ostringstream text;
  for (Eigen::Index m = 0; m < poles.size(); ++m) {
    if (m == offset_pole) continue;
    const std::complex<double> z = poles[m];
    if (std::abs(std::arg(z)) > options.max_pole_angle && std::abs(z.imag()) > 0.0 &&
        z.real() > 0.0) {
      out.status = SignalStatus::kComplexPoles;
      text << "pole " << z.real() << (z.imag() < 0 ? " - " : " + ") << std::abs(z.imag())
           << "i has angle " << std::arg(z) << " rad: the data oscillate (a frequency of "
           << std::abs(std::arg(z)) / (2 * kPi * out.sample_spacing)
           << " per x unit), not a sum of real decays";
      break;
    }
    if (!(z.real() > 0.0 && z.real() < 1.0) || std::abs(std::arg(z)) > options.max_pole_angle) {
      out.status = SignalStatus::kNonDecaying;
      text << "pole " << z.real() << " is outside (0, 1): "
           << (z.real() >= 1.0 ? "a growing or constant term"
                               : "a term that alternates in sign from sample to sample")
           << ", not a decay";
      break;
    }
    ExponentialTerm term;
    term.rate = -std::log(z.real()) / out.sample_spacing;
    out.terms.push_back(term);
  }
  if (!out.IsOk()) {
    out.message = text.str();
    out.terms.clear();
    return out;
  }
  std::sort(out.terms.begin(), out.terms.end(),
            [](const ExponentialTerm& a, const ExponentialTerm& b) { return a.rate < b.rate; });

  // Amplitudes by linear least squares on the original points, basis exp(-r (x - x0)) so
  // that no column underflows; a = b exp(r x0) refers them to x = 0.
  Eigen::MatrixXd design(n, num_poles);
  for (int m = 0; m < k; ++m) {
    design.col(m) = (-out.terms[m].rate * (x.array() - x[0])).exp();
  }
  if (options.fit_offset) design.col(k).setOnes();
  const LinearFit amplitudes = SolveWeightedLeastSquares(design, y);
  if (!amplitudes.IsOk()) {
    out.status = amplitudes.status;
    out.message = "amplitudes for the rates found: " + amplitudes.message;
    out.terms.clear();
    return out;
  }
  for (int m = 0; m < k; ++m) {
    out.terms[m].amplitude = amplitudes.coefficients[m] * std::exp(out.terms[m].rate * x[0]);
    if (!std::isfinite(out.terms[m].amplitude)) {
      out.status = SignalStatus::kNonFinite;
      text << "the amplitude of the term with rate " << out.terms[m].rate
           << " overflows when referred to x = 0 (data start at x = " << x[0]
           << "): shift x to start near 0";
      out.message = text.str();
      out.terms.clear();
      return out;
    }
  }
  if (options.fit_offset) out.offset = amplitudes.coefficients[k];
  out.rss = amplitudes.rss;
  return out;
}

}  // namespace signal
}  // namespace foothold
