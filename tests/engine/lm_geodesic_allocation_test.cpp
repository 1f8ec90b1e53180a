// Levenberg–Marquardt with geodesic acceleration allocates nothing per trial step.
// (Its own executable: it interposes malloc for the whole program.)
#include <atomic>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstddef>

#include "engine/solve/levenberg_marquardt.h"

// Counts every heap allocation. Eigen's dynamic vectors call malloc directly, not operator
// new, so the count interposes malloc itself (glibc keeps the real one as __libc_malloc);
// operator new reaches it through libstdc++.
namespace {
std::atomic<long> g_num_allocations{0};
}  // namespace

extern "C" void* __libc_malloc(std::size_t size);
extern "C" void* malloc(std::size_t size) {
  g_num_allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_malloc(size);
}

namespace foothold {
namespace {

// One event per model call: the allocation count when it began and whether it was a
// Jacobian call. Fixed storage, so recording allocates nothing.
struct CallLog {
  static constexpr int kCapacity = 20000;
  long allocations[kCapacity];
  bool with_jacobian[kCapacity];
  int size = 0;
  void Record(bool jacobian) {
    if (size == kCapacity) return;
    allocations[size] = g_num_allocations.load();
    with_jacobian[size] = jacobian;
    ++size;
  }
};

// a1 exp(-b1 x) + a2 exp(-b2 x): from a poor start the trust region rejects many steps.
class LoggedBiexp : public Model {
 public:
  explicit LoggedBiexp(CallLog* log) : log_(log) {}
  int NumParameters() const override { return 4; }
  const std::vector<std::string>& ParameterNames() const override { return names_; }
  const std::vector<std::string>& PredictorNames() const override { return predictors_; }
  void Evaluate(const Eigen::MatrixXd& x, const double* p, double* values) const override {
    log_->Record(false);
    for (Eigen::Index i = 0; i < x.rows(); ++i) values[i] = Value(x(i, 0), p);
  }
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* p, double* values,
                            double* jacobian) const override {
    log_->Record(true);
    const Eigen::Index n = x.rows();
    for (Eigen::Index i = 0; i < n; ++i) {
      const double t = x(i, 0);
      const double e1 = std::exp(-p[1] * t);
      const double e2 = std::exp(-p[3] * t);
      values[i] = p[0] * e1 + p[2] * e2;
      jacobian[i] = e1;
      jacobian[n + i] = -p[0] * t * e1;
      jacobian[2 * n + i] = e2;
      jacobian[3 * n + i] = -p[2] * t * e2;
    }
  }
  std::unique_ptr<Model> Clone() const override { return std::make_unique<LoggedBiexp>(log_); }

 private:
  static double Value(double t, const double* p) {
    return p[0] * std::exp(-p[1] * t) + p[2] * std::exp(-p[3] * t);
  }
  CallLog* log_;
  std::vector<std::string> names_{"a1", "b1", "a2", "b2"};
  std::vector<std::string> predictors_{"x"};
};

TEST_CASE("LevenbergMarquardt: geodesic acceleration allocates nothing between trials",
          "[engine]") {
  static CallLog log;
  const LoggedBiexp model(&log);
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  const int n = 80;
  problem.data.predictors.resize(n, 1);
  problem.data.response.resize(n);
  for (int i = 0; i < n; ++i) {
    const double t = 0.1 * i;
    problem.data.predictors(i, 0) = t;
    problem.data.response[i] = 5 * std::exp(-2 * t) + 1.5 * std::exp(-0.2 * t);
  }
  LevenbergMarquardtOptions options;
  options.use_geodesic_acceleration = true;
  // Poor starts, so that the trust region rejects steps and trials follow one another.
  const double starts[3][4] = {{1, 20, 1, 0.01}, {10, 0.01, -3, 5}, {0.1, 50, 0.1, 0.001}};
  int num_pairs = 0;
  long allocated = 0;
  for (const auto& values : starts) {
    log.size = 0;
    const Eigen::VectorXd start = Eigen::Map<const Eigen::VectorXd>(values, 4);
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, start, options);
    INFO(summary.BriefReport());
    // Consecutive value-only calls (a trial's probe, the trial, the next trial's probe)
    // with no Jacobian call between lie inside one iteration's trial loop.
    for (int k = 1; k < log.size; ++k) {
      if (log.with_jacobian[k] || log.with_jacobian[k - 1]) continue;
      ++num_pairs;
      allocated += log.allocations[k] - log.allocations[k - 1];
    }
  }
  INFO("value-only call pairs " << num_pairs);
  REQUIRE(num_pairs >= 6);
  CHECK(allocated == 0);
}

}  // namespace
}  // namespace foothold
