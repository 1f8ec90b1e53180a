#pragma once
// Adversarial variants of the generated corpus (corpus.h), for the multistart acceptance:
//
// (a) Poisoned guesses. The same datasets, but every guess candidate replaced by a
//     deliberately wrong one, decided by a seeded rule: stream Random(seed, case index,
//     candidate index) draws, per candidate, one coin per parameter and one peak layout.
//     By parameter role (the parameter's API name without its peak number):
//       location   center, log_ec50      moved to the end of the x range farther from the
//                                        candidate's own value (2% inside it);
//       scale      sigma hwhm fwhm tau tau1 tau2 km kd vmax bmax ea displacement
//                                        multiplied by 20 or divided by 20 (coin);
//       rate       rate frequency        multiplied by 0.05;
//       amplitude  height amplitude amplitude1 amplitude2 prefactor asymptote slope c0..cd
//                                        sign flipped where the lower bound allows (< 0),
//                                        else multiplied by 20 or divided by 20;
//       offset     baseline intercept    moved up by the full range of the response;
//       plateaus   bottom, top           exchanged;
//       exponent   hill exponent         sign flipped; n beta asymmetry x5 or /5 (coin);
//       phase      phase                 plus pi/2;
//       mixing     eta                   1 when eta < 0.5, else 0.
//     Multi-peak candidates also get one of three layouts (uniform draw): "far" (each center
//     at its own far end, which splits the peaks between the two ends), "stacked" (every
//     center at the one end farther from the candidates' mean center) or "swapped" (centers
//     in reverse order, heights and widths left with their peak numbers). Values are then
//     clamped into the problem's bounds. Each poisoned candidate keeps its slot and is
//     named "poisoned_<layout>_<original name>" (layout "far" for single-peak families).
// (b) Nearly merged peaks for multi_gaussian and multi_lorentzian (2 and 3 peaks): neighbours
//     0.5-1.2 FWHM apart, the tallest of height Y and the others 0.25-0.7 Y, widths within
//     0.8-1.25 of one FWHM, signal-to-noise 20-200 (to the smallest peak height).
//     pseudo_voigt is a single-peak family; the catalogue has no multi-peak pseudo-Voigt.
//
// Header-only (each *_test.cpp builds alone), deterministic for a seed.

#include <Eigen/Core>
#include <algorithm>
#include <cctype>
#include <cmath>
#include <string>
#include <vector>

#include "corpus.h"

namespace foothold {
namespace corpus {

// A candidate start as the guesser names it (without the "guess:" prefix).
struct NamedStart {
  std::string name;
  Eigen::VectorXd parameters;
};

enum class ParameterRole {
  kLocation,
  kScale,
  kRate,
  kAmplitude,
  kOffset,
  kPlateau,
  kSignedExponent,
  kShapeExponent,
  kPhase,
  kMixing,
};

// "center2" -> "center"; "c3" stays "c3" (polynomial coefficients are amplitudes anyway).
inline std::string RoleName(const std::string& name) {
  if (name.size() > 2 && name[0] == 'c' && std::isdigit(static_cast<unsigned char>(name[1])))
    return "c";
  std::string base = name;
  while (!base.empty() && std::isdigit(static_cast<unsigned char>(base.back()))) base.pop_back();
  return base;
}

inline ParameterRole RoleOf(const std::string& name) {
  const std::string base = RoleName(name);
  if (base == "center" || base == "log_ec50") return ParameterRole::kLocation;
  if (base == "rate" || base == "frequency") return ParameterRole::kRate;
  if (base == "baseline" || base == "intercept") return ParameterRole::kOffset;
  if (base == "bottom" || base == "top") return ParameterRole::kPlateau;
  if (base == "hill" || base == "exponent") return ParameterRole::kSignedExponent;
  if (base == "n" || base == "beta" || base == "asymmetry") return ParameterRole::kShapeExponent;
  if (base == "phase") return ParameterRole::kPhase;
  if (base == "eta") return ParameterRole::kMixing;
  if (base == "height" || base == "amplitude" || base == "prefactor" || base == "asymptote" ||
      base == "slope" || base == "c")
    return ParameterRole::kAmplitude;
  return ParameterRole::kScale;  // sigma, hwhm, fwhm, tau, km, kd, vmax, bmax, ea, displacement
}

// What the poisoning rule needs to know about a dataset and its problem.
struct PoisonContext {
  std::vector<std::string> names;  // the model's parameter names
  Eigen::VectorXd lower, upper;    // the problem's bounds
  double x_min = 0, x_max = 1;     // range of the predictor
  double y_range = 1;              // max - min of the response
  uint64_t seed = 0;
  int case_index = 0;
};

// Stream of one candidate: the corpus seed, the case and the candidate mixed by splitmix64.
inline Random PoisonStream(const PoisonContext& context, int candidate) {
  Random mix(context.seed ^ (0xA5A5A5A5ULL * (static_cast<uint64_t>(context.case_index) + 1)));
  const uint64_t word = mix.Next() + 0x9E3779B97F4A7C15ULL * static_cast<uint64_t>(candidate + 1);
  return Random(word);
}

inline double FarEnd(const PoisonContext& context, double value) {
  const double inset = 0.02 * (context.x_max - context.x_min);
  const bool left_is_farther = std::abs(value - context.x_min) > std::abs(value - context.x_max);
  return left_is_farther ? context.x_min + inset : context.x_max - inset;
}

inline double PoisonValue(const PoisonContext& context, int j, double value, Random& random) {
  const double factor = random.Uniform() < 0.5 ? 20.0 : 1.0 / 20.0;
  const double shape_factor = random.Uniform() < 0.5 ? 5.0 : 1.0 / 5.0;
  switch (RoleOf(context.names[j])) {
    case ParameterRole::kLocation:
      return FarEnd(context, value);
    case ParameterRole::kScale:
      return value * factor;
    case ParameterRole::kRate:
      return value * 0.05;
    case ParameterRole::kAmplitude:
      return context.lower[j] < 0 ? -value : value * factor;
    case ParameterRole::kOffset:
      return value + context.y_range;
    case ParameterRole::kPlateau:
      return value;  // exchanged by the caller
    case ParameterRole::kSignedExponent:
      return -value;
    case ParameterRole::kShapeExponent:
      return value * shape_factor;
    case ParameterRole::kPhase:
      return value + 0.5 * kPi;
    case ParameterRole::kMixing:
      return value < 0.5 ? 1.0 : 0.0;
  }
  return value;
}

// Indices of the peaks' centers, in peak order (empty or one entry for single-peak models).
inline std::vector<int> CenterIndices(const PoisonContext& context) {
  std::vector<int> centers;
  for (size_t j = 0; j < context.names.size(); ++j) {
    if (RoleName(context.names[j]) == "center") centers.push_back(static_cast<int>(j));
  }
  return centers;
}

inline NamedStart PoisonCandidate(const PoisonContext& context, const NamedStart& original,
                                  int candidate) {
  Random random = PoisonStream(context, candidate);
  const Eigen::VectorXd& v = original.parameters;
  Eigen::VectorXd poisoned = v;
  for (Eigen::Index j = 0; j < v.size(); ++j) {
    poisoned[j] = PoisonValue(context, static_cast<int>(j), v[j], random);
  }
  int bottom = -1, top = -1;
  for (size_t j = 0; j < context.names.size(); ++j) {
    if (context.names[j] == "bottom") bottom = static_cast<int>(j);
    if (context.names[j] == "top") top = static_cast<int>(j);
  }
  if (bottom >= 0 && top >= 0) std::swap(poisoned[bottom], poisoned[top]);

  std::string layout = "far";
  const std::vector<int> centers = CenterIndices(context);
  if (centers.size() > 1) {
    const double draw = random.Uniform();
    if (draw < 1.0 / 3) {
      // "far": each center already sits at its own far end.
    } else if (draw < 2.0 / 3) {
      layout = "stacked";
      double mean = 0;
      for (int j : centers) mean += v[j] / static_cast<double>(centers.size());
      for (int j : centers) poisoned[j] = FarEnd(context, mean);
    } else {
      layout = "swapped";
      for (size_t m = 0; m < centers.size(); ++m) {
        poisoned[centers[m]] = v[centers[centers.size() - 1 - m]];
      }
    }
  }
  for (Eigen::Index j = 0; j < poisoned.size(); ++j) {
    poisoned[j] = std::min(context.upper[j], std::max(context.lower[j], poisoned[j]));
  }
  return {"poisoned_" + layout + "_" + original.name, poisoned};
}

// Every candidate poisoned, same count and order.
inline std::vector<NamedStart> PoisonCandidates(const PoisonContext& context,
                                                const std::vector<NamedStart>& candidates) {
  std::vector<NamedStart> poisoned;
  for (size_t k = 0; k < candidates.size(); ++k) {
    poisoned.push_back(PoisonCandidate(context, candidates[k], static_cast<int>(k)));
  }
  return poisoned;
}

// num_cases nearly merged multi-peak datasets for each of multi_gaussian and
// multi_lorentzian; the peak count alternates 2, 3.
inline std::vector<CorpusCase> GenerateMergedPeaks(uint64_t seed, int num_cases) {
  std::vector<CorpusCase> cases;
  Random r(seed ^ 0x6D65726765ULL);  // "merge"
  for (const std::string family : {"multi_gaussian", "multi_lorentzian"}) {
    const bool is_lorentzian = family == "multi_lorentzian";
    const double per_fwhm = is_lorentzian ? 0.5 : 1 / kFwhmPerSigma;
    for (int i = 0; i < num_cases; ++i) {
      CorpusCase c;
      c.request.name = family;
      const int peaks = 2 + i % 2;
      c.request.peaks = peaks;
      c.is_overlapping = true;
      c.is_even = i % 2 == 0;
      const int n = static_cast<int>(std::lround(r.LogUniform(std::max(40, 12 * peaks), 2000)));
      const double X = std::pow(10.0, r.Uniform(-9, 4)), Y = std::pow(10.0, r.Uniform(-6, 6));
      const double snr = r.LogUniform(20, 200);
      // At least 8 points per FWHM; the pattern well inside the x range.
      const double fwhm = std::max(r.Uniform(0.06, 0.15), 8.0 / n) * X;
      std::vector<double> separations;
      double span = 0;
      for (int m = 1; m < peaks; ++m) {
        separations.push_back(r.Uniform(0.5, 1.2) * fwhm);
        span += separations.back();
      }
      double center = 0.5 * X - 0.5 * span + r.Uniform(-0.05, 0.05) * X;
      const int tallest = static_cast<int>(r.Uniform() * peaks) % peaks;
      c.truth.resize(3 * peaks + 1);
      double height_min = Y;
      for (int m = 0; m < peaks; ++m) {
        const double h = (m == tallest ? 1.0 : r.Uniform(0.25, 0.7)) * Y;
        height_min = std::min(height_min, h);
        c.truth.segment<3>(3 * m) << h, center, fwhm * r.Uniform(0.8, 1.25) * per_fwhm;
        if (m + 1 < peaks) center += separations[m];
      }
      c.truth[3 * peaks] = r.Uniform(-0.5, 0.5) * Y;
      c.x = MakeX(r, n, 0, X, c.is_even);
      const Eigen::VectorXd clean = Evaluate(c.request, c.x, c.truth);
      const double noise = height_min / snr;
      c.y.resize(clean.size());
      for (Eigen::Index j = 0; j < clean.size(); ++j) c.y[j] = clean[j] + noise * r.Normal();
      c.snr = snr;
      c.x_scale = X;
      c.y_scale = Y;
      std::string separation_text;
      for (double s : separations)
        separation_text += (separation_text.empty() ? "" : ",") + Short(s / fwhm);
      c.label = family + " merged#" + std::to_string(i) + " peaks=" + std::to_string(peaks) +
                " n=" + std::to_string(n) + (c.is_even ? " even" : " uneven") +
                " snr=" + Short(snr) + " xscale=" + Short(X) + " yscale=" + Short(Y) +
                " separation/fwhm=" + separation_text;
      cases.push_back(std::move(c));
    }
  }
  return cases;
}

}  // namespace corpus
}  // namespace foothold
