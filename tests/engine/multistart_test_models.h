#pragma once
// Small models and problems for the multistart tests. Each carries its own answer. The
// model type, the exponential decay, MakeProblem and Vec are shared with other engine tests
// (tests/engine/test_models.h).

#include <Eigen/Core>
#include <cmath>
#include <functional>
#include <string>
#include <vector>

#include "engine/model/model.h"
#include "engine/multistart/multistart.h"
#include "engine/solve/problem.h"
#include "tests/engine/test_models.h"

namespace foothold {
namespace testing {

// amplitude * sin(2 pi frequency x): the cost has a local minimum near every frequency whose
// sine is orthogonal-ish to the data, many basins in frequency.
inline PointwiseModel SineModel() {
  constexpr double kTwoPi = 6.283185307179586;
  return PointwiseModel(
      {"amplitude", "frequency"},
      [](double x, const double* p) { return p[0] * std::sin(kTwoPi * p[1] * x); },
      [](double x, const double* p, double* g) {
        g[0] = std::sin(kTwoPi * p[1] * x);
        g[1] = p[0] * kTwoPi * x * std::cos(kTwoPi * p[1] * x);
      });
}

// Sum of `num_peaks` gaussians h_k exp(-(x - c_k)^2 / (2 s_k^2)); parameters
// (h1, c1, s1, h2, ...). With `symmetric`, the peaks form one PermutationSymmetry sorted by
// center.
inline PointwiseModel GaussianPeaksModel(int num_peaks, bool symmetric) {
  std::vector<std::string> names;
  PermutationSymmetry symmetry;
  symmetry.sort_position = 1;
  for (int k = 0; k < num_peaks; ++k) {
    names.push_back("height" + std::to_string(k + 1));
    names.push_back("center" + std::to_string(k + 1));
    names.push_back("sigma" + std::to_string(k + 1));
    symmetry.members.push_back({3 * k, 3 * k + 1, 3 * k + 2});
  }
  std::vector<PermutationSymmetry> symmetries;
  if (symmetric) symmetries.push_back(symmetry);
  return PointwiseModel(
      names,
      [num_peaks](double x, const double* p) {
        double sum = 0;
        for (int k = 0; k < num_peaks; ++k) {
          const double z = (x - p[3 * k + 1]) / p[3 * k + 2];
          sum += p[3 * k] * std::exp(-0.5 * z * z);
        }
        return sum;
      },
      [num_peaks](double x, const double* p, double* g) {
        for (int k = 0; k < num_peaks; ++k) {
          const double h = p[3 * k], s = p[3 * k + 2];
          const double z = (x - p[3 * k + 1]) / s;
          const double e = std::exp(-0.5 * z * z);
          g[3 * k] = e;
          g[3 * k + 1] = h * e * z / s;
          g[3 * k + 2] = h * e * z * z / s;
        }
      },
      symmetries);
}

// Bounds for GaussianPeaksModel: widths > 0 (the model depends on sigma^2 only, so without
// this bound -sigma would be a second, undeclared copy of every optimum).
inline void BoundPeakWidths(int num_peaks, Problem* problem) {
  problem->lower = Eigen::VectorXd::Constant(3 * num_peaks, -INFINITY);
  problem->upper = Eigen::VectorXd::Constant(3 * num_peaks, INFINITY);
  for (int k = 0; k < num_peaks; ++k) problem->lower[3 * k + 2] = 1e-3;
}

// intercept + slope * x, but not finite (NaN) whenever intercept > 5: starts there fail.
inline PointwiseModel PartlyUndefinedLineModel() {
  return PointwiseModel(
      {"intercept", "slope"},
      [](double x, const double* p) { return p[0] > 5 ? std::nan("") : p[0] + p[1] * x; },
      [](double x, const double* p, double* g) {
        g[0] = 1;
        g[1] = x;
      });
}

// A model with its problem and search box, kept together (the problem points at the model,
// so a case is built in place and never copied).
struct SearchCase {
  PointwiseModel model;
  Problem problem;
  SearchBox box;
  SearchCase(PointwiseModel m, const std::function<double(double)>& truth, int n, double step,
             double perturbation, Eigen::VectorXd lower, Eigen::VectorXd upper)
      : model(std::move(m)) {
    problem = MakeProblem(model, truth, n, 0.0, step, perturbation);
    box.lower = std::move(lower);
    box.upper = std::move(upper);
  }
  SearchCase(const SearchCase&) = delete;
  SearchCase& operator=(const SearchCase&) = delete;
};

// 3 exp(-0.7 x) on 40 points: one basin. Seed it with {2, 0.5}.
inline SearchCase DecayCase() {
  return SearchCase(
      ExpDecayModel(), [](double x) { return 3.0 * std::exp(-0.7 * x); }, 40, 0.2, 0.01,
      Vec({0.1, 0.01}), Vec({10.0, 10.0}));
}

// 2 sin(2 pi 1.3 x) on 80 points: many basins in frequency. Seeded far off with {1, 0.4}.
inline SearchCase ManyBasinSineCase() {
  return SearchCase(
      SineModel(), [](double x) { return 2.0 * std::sin(6.283185307179586 * 1.3 * x); }, 80, 0.05,
      0.05, Vec({-5.0, 0.05}), Vec({5.0, 6.0}));
}

}  // namespace testing
}  // namespace foothold
