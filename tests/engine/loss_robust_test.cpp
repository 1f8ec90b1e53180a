// The robust losses of engine/loss/robust_loss.h: rho, psi = rho', rho'' and the IRLS weight
// psi(z)/z agree with each other and with the published closed forms, and the MAD scale.

#include <catch2/catch.hpp>
#include <cmath>

#include "engine/loss/robust_loss.h"

namespace foothold {
namespace {

// Central differences with step 1e-5 on functions of order 1: error ~1e-10, rounding ~1e-11.
constexpr double kDerivativeTolerance = 1e-7;
const LossKind kAllLosses[] = {LossKind::kSquared, LossKind::kSoftL1, LossKind::kHuber,
                               LossKind::kCauchy,  LossKind::kTukey,  LossKind::kL1};

TEST_CASE("Robust losses: psi and rho'' are the derivatives of rho, weight is psi / z",
          "[engine]") {
  constexpr double h = 1e-5;
  for (LossKind loss : kAllLosses) {
    // Points away from the kinks (Huber 1.345, biweight 4.685, L1 0).
    for (double z : {-7.3, -3.1, -1.0, -0.4, 0.3, 0.9, 2.2, 4.0, 6.5}) {
      INFO(ToString(loss) << " at z = " << z);
      const LossValue v = EvaluateLoss(loss, z);
      const double drho = (EvaluateLoss(loss, z + h).rho - EvaluateLoss(loss, z - h).rho) / (2 * h);
      const double dpsi = (EvaluateLoss(loss, z + h).psi - EvaluateLoss(loss, z - h).psi) / (2 * h);
      CHECK(v.psi == Approx(drho).margin(kDerivativeTolerance));
      CHECK(v.dpsi == Approx(dpsi).margin(kDerivativeTolerance));
      CHECK(v.weight * z == Approx(v.psi).margin(1e-14));
    }
    std::string text = ToString(loss);
    LossKind parsed = LossKind::kSquared;
    REQUIRE(LossKindFromString(text, &parsed));
    CHECK(parsed == loss);
  }
  LossKind unused;
  CHECK_FALSE(LossKindFromString("arctan", &unused));
}

TEST_CASE("Robust losses: closed forms at chosen points", "[engine]") {
  // Huber (1964): quadratic inside k = 1.345, linear k|z| - k^2/2 outside.
  CHECK(EvaluateLoss(LossKind::kHuber, 1.0).rho == Approx(0.5));
  CHECK(EvaluateLoss(LossKind::kHuber, 3.0).rho == Approx(1.345 * 3 - 0.5 * 1.345 * 1.345));
  CHECK(EvaluateLoss(LossKind::kHuber, 3.0).weight == Approx(1.345 / 3));
  // Soft-L1: sqrt(1 + z^2) - 1 at z = sqrt(3) is 1.
  CHECK(EvaluateLoss(LossKind::kSoftL1, std::sqrt(3.0)).rho == Approx(1.0));
  // Cauchy: (c^2/2) log(1 + (z/c)^2) at z = c is (c^2/2) log 2, weight 1/2.
  const double c = LossTuningConstant(LossKind::kCauchy);
  CHECK(EvaluateLoss(LossKind::kCauchy, c).rho == Approx(0.5 * c * c * std::log(2.0)));
  CHECK(EvaluateLoss(LossKind::kCauchy, c).weight == Approx(0.5));
  // Beaton & Tukey (1974) biweight: rho(c) = c^2/6 and constant beyond, weight 0 there;
  // at z = c/2 the weight is (1 - 1/4)^2 = 9/16.
  const double t = LossTuningConstant(LossKind::kTukey);
  CHECK(t == 4.685);
  CHECK(EvaluateLoss(LossKind::kTukey, t).rho == Approx(t * t / 6));
  CHECK(EvaluateLoss(LossKind::kTukey, 10.0).rho == Approx(t * t / 6));
  CHECK(EvaluateLoss(LossKind::kTukey, 10.0).weight == 0);
  CHECK(EvaluateLoss(LossKind::kTukey, t / 2).weight == Approx(9.0 / 16));
  // L1: |z|, weight 1/|z| floored.
  CHECK(EvaluateLoss(LossKind::kL1, -2.0).rho == 2.0);
  CHECK(EvaluateLoss(LossKind::kL1, 0.0).weight == 1 / kL1Floor);
  // Near zero every smooth loss is z^2/2 to second order.
  for (LossKind loss : {LossKind::kSoftL1, LossKind::kHuber, LossKind::kCauchy, LossKind::kTukey}) {
    CHECK(EvaluateLoss(loss, 1e-3).rho == Approx(0.5e-6).epsilon(1e-5));
  }
  CHECK(OutlierCut(LossKind::kTukey) == 4.685);
  CHECK(OutlierCut(LossKind::kHuber) == 3.0);
}

TEST_CASE("Robust losses: MAD scale and outlier flags", "[engine]") {
  // |r| = 1, 1, 2, 2, 100: median 2, scale 1.4826 * 2 whatever the outlier's size.
  Eigen::VectorXd r(5);
  r << 1, -1, 2, -2, 100;
  CHECK(MadScale(r) == Approx(2 * 1.4826));
  // Even count: median of |r| = (1, 2, 3, 4) is 2.5.
  Eigen::VectorXd even(4);
  even << -4, 1, 3, -2;
  CHECK(MadScale(even) == Approx(2.5 * 1.4826));
  CHECK(FlagOutliers(LossKind::kHuber, r, 1.0) == std::vector<int>{4});
  CHECK(FlagOutliers(LossKind::kTukey, r, 25.0).empty());  // |z| = 4 <= 4.685
  CHECK(RobustObjective(LossKind::kSquared, r, 2.0) == Approx(0.5 * r.squaredNorm()));
}

}  // namespace
}  // namespace foothold
