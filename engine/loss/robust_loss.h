#pragma once
// Robust losses of the scaled residual z = r / s, and the robust noise scale s.
//
// Every loss is written as rho(z) with rho(z) = z^2 / 2 + O(z^4) near zero (L1 excepted), so a
// robust fit with small residuals behaves like least squares. The fit minimises
// sum_i s^2 rho(r_i / s); its stationarity condition sum_i psi(z_i) dr_i/dtheta = 0 equals the
// normal equations of weighted least squares with weights w_i = psi(z_i) / z_i, which is what
// iteratively reweighted least squares (IRLS) solves (Holland & Welsch 1977).

#include <Eigen/Core>
#include <string>
#include <vector>

namespace foothold {

enum class LossKind {
  kSquared,  // rho = z^2/2
  kSoftL1,   // rho = sqrt(1 + z^2) - 1 (pseudo-Huber, Charbonnier et al. 1994)
  kHuber,    // rho = z^2/2 for |z| <= k, k|z| - k^2/2 beyond; k = 1.345 (Huber 1964)
  kCauchy,   // rho = (c^2/2) log(1 + (z/c)^2); c = 2.3849 (Holland & Welsch 1977)
  kTukey,    // biweight: rho = (c^2/6)(1 - (1 - (z/c)^2)^3), constant beyond c = 4.685
             // (Beaton & Tukey 1974)
  kL1,       // rho = |z|, least absolute deviations
};
const char* ToString(LossKind loss);  // "squared", "soft_l1", "huber", "cauchy", "tukey", "l1"
bool LossKindFromString(const std::string& text, LossKind* loss);

// The tuning constant of the loss (k or c above; 1 for soft-L1, squared and L1).
double LossTuningConstant(LossKind loss);
// Standardised residuals |r / s| beyond this are flagged as outliers: the biweight's c = 4.685
// (its weight is zero there), 3 for every other loss.
double OutlierCut(LossKind loss);

// Value, first and second derivative of rho at z, and the IRLS weight psi(z)/z (for L1,
// 1 / max(|z|, l1_floor)). Second derivatives of Huber and L1 at their kinks take the
// one-sided value of the quadratic piece (Huber) or 0 (L1).
struct LossValue {
  double rho = 0;
  double psi = 0;     // rho'
  double dpsi = 0;    // rho''
  double weight = 1;  // psi(z) / z, the IRLS weight; 1 at z = 0
};
// Floor on |z| in the L1 weight 1 / |z|: keeps points the line passes through finite.
constexpr double kL1Floor = 1e-8;
LossValue EvaluateLoss(LossKind loss, double z);

// 1.4826 * median(|r_i|): the normal-consistent median absolute deviation about zero of
// residuals whose centre is zero (a fit with an offset), Hampel 1974. 0 for no residuals.
double MadScale(const Eigen::VectorXd& residuals);

// sum_i s^2 rho(r_i / s), the robust objective; s > 0.
double RobustObjective(LossKind loss, const Eigen::VectorXd& residuals, double scale);

// Indices i with |r_i / s| > OutlierCut(loss).
std::vector<int> FlagOutliers(LossKind loss, const Eigen::VectorXd& residuals, double scale);

}  // namespace foothold
