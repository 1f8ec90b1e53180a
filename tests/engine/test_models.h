#pragma once
// Models and problems shared by the engine tests whose problems carry their own answers: a
// one-predictor model written as two functions (value and analytic gradient per point), an
// exponential decay, a problem on evenly spaced x from a known curve, and Vec, a vector from
// a brace list.

#include <Eigen/Core>
#include <cmath>
#include <functional>
#include <initializer_list>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "engine/model/model.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace testing {

// A model from a value function and its gradient, evaluated point by point on the predictor
// "x", with optional permutation symmetries.
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
