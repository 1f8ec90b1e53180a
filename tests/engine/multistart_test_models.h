#pragma once
// Small models and problems for the multistart tests. Each carries its own answer.

#include <Eigen/Core>
#include <cmath>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/model.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace testing {

// A model from a value function and its gradient, evaluated point by point, with optional
// permutation symmetries.
class PointwiseModel : public Model {
 public:
  using ValueFn = std::function<double(double x, const double* p)>;
  using GradFn = std::function<void(double x, const double* p, double* grad)>;
  PointwiseModel(std::vector<std::string> names, ValueFn value, GradFn grad,
                 std::vector<PermutationSymmetry> symmetries = {})
      : names_(std::move(names)),
        value_(std::move(value)),
        grad_(std::move(grad)),
        symmetries_(std::move(symmetries)) {}
  int NumParameters() const override { return static_cast<int>(names_.size()); }
  const std::vector<std::string>& ParameterNames() const override { return names_; }
  const std::vector<std::string>& PredictorNames() const override { return predictors_; }
  void Evaluate(const Eigen::MatrixXd& x, const double* p, double* values) const override {
    for (Eigen::Index i = 0; i < x.rows(); ++i) values[i] = value_(x(i, 0), p);
  }
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* p, double* values,
                            double* jacobian) const override {
    const Eigen::Index n = x.rows();
    std::vector<double> grad(names_.size());
    for (Eigen::Index i = 0; i < n; ++i) {
      values[i] = value_(x(i, 0), p);
      grad_(x(i, 0), p, grad.data());
      for (size_t j = 0; j < names_.size(); ++j) jacobian[j * n + i] = grad[j];
    }
  }
  std::vector<PermutationSymmetry> Symmetries() const override { return symmetries_; }
  std::unique_ptr<Model> Clone() const override { return std::make_unique<PointwiseModel>(*this); }

 private:
  std::vector<std::string> names_;
  std::vector<std::string> predictors_{"x"};
  ValueFn value_;
  GradFn grad_;
  std::vector<PermutationSymmetry> symmetries_;
};

// amplitude * exp(-rate * x): one basin for positive rates.
inline PointwiseModel ExpDecayModel() {
  return PointwiseModel(
      {"amplitude", "rate"}, [](double x, const double* p) { return p[0] * std::exp(-p[1] * x); },
      [](double x, const double* p, double* g) {
        const double e = std::exp(-p[1] * x);
        g[0] = e;
        g[1] = -p[0] * x * e;
      });
}

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

// A problem on x = x_begin + i * step, i < n, with y = truth(x) plus a deterministic
// sign-alternating perturbation of the given amplitude (so the optimum is not exact).
inline Problem MakeProblem(const Model& model, const std::function<double(double)>& truth, int n,
                           double x_begin, double step, double perturbation) {
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors.resize(n, 1);
  problem.data.response.resize(n);
  for (int i = 0; i < n; ++i) {
    const double x = x_begin + step * i;
    problem.data.predictors(i, 0) = x;
    problem.data.response[i] = truth(x) + perturbation * ((i % 3) - 1.0);
  }
  return problem;
}

inline Eigen::VectorXd Vec(std::initializer_list<double> values) {
  Eigen::VectorXd v(values.size());
  int k = 0;
  for (double value : values) v[k++] = value;
  return v;
}

}  // namespace testing
}  // namespace foothold
