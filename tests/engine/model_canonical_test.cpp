// Model::CanonicalizeParameters: equivalent parameter vectors of one curve map to one point,
// inside the bounds, and the curve does not change.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <vector>

#include "engine/model/families/dose_response_models.h"
#include "engine/model/families/internal/canonical_forms.h"
#include "engine/model/families/oscillation_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/multistart/internal/basin_clustering.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::Vec;

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kPi = 3.14159265358979323846;
// Canonical forms agree up to the rounding of one phase shift.
constexpr double kSameTolerance = 1e-12;
// Curves at the canonical point agree with the original to rounding.
constexpr double kCurveTolerance = 1e-10;

Eigen::MatrixXd Grid(int n, double from, double step) {
  Eigen::MatrixXd x(n, 1);
  for (int i = 0; i < n; ++i) x(i, 0) = from + step * i;
  return x;
}

Eigen::VectorXd Curve(const Model& model, const Eigen::MatrixXd& x, const Eigen::VectorXd& p) {
  Eigen::VectorXd values(x.rows());
  model.Evaluate(x, p.data(), values.data());
  return values;
}

Eigen::VectorXd Canonical(const Model& model, Eigen::VectorXd p, const Eigen::VectorXd& lower,
                          const Eigen::VectorXd& upper) {
  model.CanonicalizeParameters(p.data(), lower.data(), upper.data());
  return p;
}

Eigen::VectorXd Unbounded(int p, double sign) { return Eigen::VectorXd::Constant(p, sign * kInf); }

TEST_CASE("WrapPeriodic: the window [-pi, pi), else the first period inside the bounds",
          "[engine]") {
  double out = 0;
  REQUIRE(family_math::WrapPeriodic(3 * kPi, 2 * kPi, -kInf, kInf, &out));
  CHECK(out == Approx(-kPi));
  REQUIRE(family_math::WrapPeriodic(-7.0, 2 * kPi, -kInf, kInf, &out));
  CHECK(out == Approx(-7.0 + 2 * kPi));
  // A value already in its window is returned bit for bit.
  REQUIRE(family_math::WrapPeriodic(0.3, 2 * kPi, -kInf, kInf, &out));
  CHECK(out == 0.3);
  // Bounds [0, 10] do not hold [-pi, pi): the smallest member >= 0.
  REQUIRE(family_math::WrapPeriodic(-1.0, 2 * kPi, 0, 10, &out));
  CHECK(out == Approx(2 * kPi - 1.0));
  // Only an upper bound: the largest member <= it.
  REQUIRE(family_math::WrapPeriodic(5.0, 2 * kPi, -kInf, 1.0, &out));
  CHECK(out == Approx(5.0 - 2 * kPi));
  // No member inside [1, 2] for 0: refused.
  CHECK_FALSE(family_math::WrapPeriodic(0.0, 2 * kPi, 1, 2, &out));
  CHECK_FALSE(family_math::WrapPeriodic(std::nan(""), 2 * kPi, -kInf, kInf, &out));
}

TEST_CASE("DampedSineModel: (A, phi), (-A, phi + pi) and phi + 2 pi k share one canonical form",
          "[engine]") {
  const DampedSineModel model;
  const Eigen::MatrixXd x = Grid(60, 0.0, 0.1);
  const Eigen::VectorXd lower = Unbounded(5, -1);
  const Eigen::VectorXd upper = Unbounded(5, 1);
  const Eigen::VectorXd a = Vec({40, 5, 0.85, 0.4, 1});
  const std::vector<Eigen::VectorXd> twins = {
      Vec({-40, 5, 0.85, 0.4 + kPi, 1}), Vec({40, 5, 0.85, 0.4 + 6 * kPi, 1}),
      Vec({-40, 5, 0.85, 0.4 - 3 * kPi, 1}), Vec({-40, 5, -0.85, -0.4, 1})};
  const Eigen::VectorXd canonical = Canonical(model, a, lower, upper);
  CHECK(canonical == a);  // already canonical: untouched
  for (const Eigen::VectorXd& twin : twins) {
    const Eigen::VectorXd c = Canonical(model, twin, lower, upper);
    INFO("twin " << twin.transpose() << " -> " << c.transpose());
    CHECK((c - canonical).cwiseAbs().maxCoeff() < kSameTolerance);
    CHECK((Curve(model, x, c) - Curve(model, x, twin)).cwiseAbs().maxCoeff() < kCurveTolerance);
  }
}

TEST_CASE("SineModel: a flip that would leave the bounds is not made", "[engine]") {
  const SineModel model;
  // Amplitude bounded below by -50 and above by 10: (-40, phi) cannot become (40, phi + pi).
  const Eigen::VectorXd lower = Vec({-50, 0, -kInf, -kInf});
  const Eigen::VectorXd upper = Vec({10, kInf, kInf, kInf});
  const Eigen::VectorXd p = Vec({-40, 0.5, 7.0, 0});
  const Eigen::VectorXd c = Canonical(model, p, lower, upper);
  CHECK(c[0] == -40);
  CHECK(c[2] == Approx(7.0 - 2 * kPi));  // the phase still wraps
  // A fixed phase (lower = upper) does not move, so the amplitude keeps its sign too.
  const Eigen::VectorXd fixed_lower = Vec({-kInf, 0, 7.0, -kInf});
  const Eigen::VectorXd fixed_upper = Vec({kInf, kInf, 7.0, kInf});
  CHECK(Canonical(model, p, fixed_lower, fixed_upper) == p);
}

TEST_CASE("Logistic4Model: (bottom, top, hill) ~ (top, bottom, -hill), canonical top >= bottom",
          "[engine]") {
  const Logistic4Model model;
  const Eigen::MatrixXd x = Grid(40, -9, 0.15);
  const Eigen::VectorXd lower = Unbounded(4, -1);
  const Eigen::VectorXd upper = Unbounded(4, 1);
  const Eigen::VectorXd inhibition = Vec({5, 100, -6.5, -1.2});
  const Eigen::VectorXd swapped = Vec({100, 5, -6.5, 1.2});
  CHECK(Canonical(model, inhibition, lower, upper) == inhibition);
  const Eigen::VectorXd c = Canonical(model, swapped, lower, upper);
  CHECK(c == inhibition);
  CHECK((Curve(model, x, c) - Curve(model, x, swapped)).cwiseAbs().maxCoeff() < kCurveTolerance);
  // hill bounded to >= 0: the swap would need hill < 0, so it is not made.
  Eigen::VectorXd hill_lower = lower;
  hill_lower[3] = 0;
  CHECK(Canonical(model, swapped, hill_lower, upper) == swapped);
}

TEST_CASE("Peak models: a negative width becomes positive when the bounds allow", "[engine]") {
  const MultiGaussianModel model(2);
  const Eigen::MatrixXd x = Grid(50, 0, 0.2);
  const Eigen::VectorXd p = Vec({3, 3, -0.5, 2, 6, 0.7, 0.5});
  const Eigen::VectorXd c = Canonical(model, p, Unbounded(7, -1), Unbounded(7, 1));
  CHECK(c == Vec({3, 3, 0.5, 2, 6, 0.7, 0.5}));
  CHECK((Curve(model, x, c) - Curve(model, x, p)).cwiseAbs().maxCoeff() < kCurveTolerance);
  Eigen::VectorXd upper = Unbounded(7, 1);
  upper[2] = 0.2;  // |sigma1| = 0.5 lies outside: keep the sign
  CHECK(Canonical(model, p, Unbounded(7, -1), upper) == p);
  for (const Model* single :
       std::vector<const Model*>{new GaussianModel, new LorentzianModel, new PseudoVoigtModel}) {
    Eigen::VectorXd q = Eigen::VectorXd::Ones(single->NumParameters());
    q[2] = -0.3;
    const Eigen::VectorXd cq =
        Canonical(*single, q, Unbounded(q.size(), -1), Unbounded(q.size(), 1));
    CHECK(cq[2] == 0.3);
    CHECK((Curve(*single, x, cq) - Curve(*single, x, q)).cwiseAbs().maxCoeff() < kCurveTolerance);
    delete single;
  }
}

TEST_CASE("Canonicalize(problem): the model's form inside the bounds, then peaks by center",
          "[engine]") {
  const MultiGaussianModel model(2);
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = Grid(20, 0, 0.5);
  problem.data.response = Eigen::VectorXd::Zero(20);
  const Eigen::VectorXd p = Vec({2, 6, -0.7, 3, 3, -0.5, 0.5});
  CHECK(internal::Canonicalize(problem, p) == Vec({3, 3, 0.5, 2, 6, 0.7, 0.5}));
  // A fixed width keeps its sign (its bounds collapse onto its value).
  problem.is_fixed = {false, false, true, false, false, false, false};
  CHECK(internal::Canonicalize(problem, p) == Vec({3, 3, 0.5, 2, 6, -0.7, 0.5}));
}

}  // namespace
}  // namespace foothold
