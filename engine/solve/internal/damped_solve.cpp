#include "engine/solve/internal/damped_solve.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace foothold {
namespace internal {

void DampedSystem::Resize(int m) {
  if (r.rows() == m && r.cols() == m) return;
  r.resize(m, m);
  pivot.resize(m);
  qtf.resize(m);
  sdiag.resize(m);
  work1.resize(m);
  work2.resize(m);
  r_diag.resize(m);
}

void DampedQrSolve(DampedSystem* system, const Eigen::VectorXd& diag_scaled,
                   const Eigen::VectorXd& qtb, Eigen::VectorXd* x) {
  Eigen::MatrixXd& r = system->r;
  Eigen::VectorXd& sdiag = system->sdiag;
  Eigen::VectorXd& wa = system->work1;
  const int m = system->Size();

  // Copy R^T into the strict lower triangle (it is eliminated there) and save diag(R).
  for (int j = 0; j < m; ++j) {
    for (int i = j + 1; i < m; ++i) r(i, j) = r(j, i);
    system->r_diag[j] = r(j, j);
    wa[j] = qtb[j];
  }

  // Eliminate the diagonal matrix P^T D P row by row with Givens rotations.
  for (int j = 0; j < m; ++j) {
    const double d = diag_scaled[system->pivot[j]];
    if (d != 0) {
      for (int k = j; k < m; ++k) sdiag[k] = 0;
      sdiag[j] = d;
      double qtbpj = 0;
      for (int k = j; k < m; ++k) {
        if (sdiag[k] == 0) continue;
        double cos_angle, sin_angle;
        if (std::abs(r(k, k)) < std::abs(sdiag[k])) {
          const double cotan = r(k, k) / sdiag[k];
          sin_angle = 0.5 / std::sqrt(0.25 + 0.25 * cotan * cotan);
          cos_angle = sin_angle * cotan;
        } else {
          const double tan = sdiag[k] / r(k, k);
          cos_angle = 0.5 / std::sqrt(0.25 + 0.25 * tan * tan);
          sin_angle = cos_angle * tan;
        }
        r(k, k) = cos_angle * r(k, k) + sin_angle * sdiag[k];
        const double temp = cos_angle * wa[k] + sin_angle * qtbpj;
        qtbpj = -sin_angle * wa[k] + cos_angle * qtbpj;
        wa[k] = temp;
        for (int i = k + 1; i < m; ++i) {
          const double t = cos_angle * r(i, k) + sin_angle * sdiag[i];
          sdiag[i] = -sin_angle * r(i, k) + cos_angle * sdiag[i];
          r(i, k) = t;
        }
      }
    }
    // Keep S's diagonal in sdiag and restore R's diagonal.
    sdiag[j] = r(j, j);
    r(j, j) = system->r_diag[j];
  }

  // Back substitution with S; a singular S gives the least-squares solution of its
  // leading nonsingular block.
  int nsing = m;
  for (int j = 0; j < m; ++j) {
    if (sdiag[j] == 0 && nsing == m) nsing = j;
    if (nsing < m) wa[j] = 0;
  }
  for (int j = nsing - 1; j >= 0; --j) {
    double sum = 0;
    for (int i = j + 1; i < nsing; ++i) sum += r(i, j) * wa[i];
    wa[j] = (wa[j] - sum) / sdiag[j];
  }
  for (int j = 0; j < m; ++j) (*x)[system->pivot[j]] = wa[j];
}

namespace {

double ScaledNorm(const Eigen::VectorXd& diag, const Eigen::VectorXd& x, Eigen::VectorXd* out) {
  *out = diag.cwiseProduct(x);
  return out->norm();
}

}  // namespace

void FindDampedStep(DampedSystem* system, const Eigen::VectorXd& diag, double radius,
                    double* lambda, Eigen::VectorXd* x) {
  constexpr double kDwarf = std::numeric_limits<double>::min();
  constexpr int kMaxNewtonIterations = 10;
  const Eigen::MatrixXd& r = system->r;
  Eigen::VectorXd& wa1 = system->work1;
  Eigen::VectorXd& wa2 = system->work2;
  const Eigen::VectorXi& pivot = system->pivot;
  const int m = system->Size();

  // Gauss–Newton direction; if R is singular, a least-squares solution.
  int nsing = m;
  for (int j = 0; j < m; ++j) {
    wa1[j] = system->qtf[j];
    if (r(j, j) == 0 && nsing == m) nsing = j;
    if (nsing < m) wa1[j] = 0;
  }
  for (int j = nsing - 1; j >= 0; --j) {
    wa1[j] /= r(j, j);
    const double temp = wa1[j];
    for (int i = 0; i < j; ++i) wa1[i] -= r(i, j) * temp;
  }
  for (int j = 0; j < m; ++j) (*x)[pivot[j]] = wa1[j];

  double dxnorm = ScaledNorm(diag, *x, &wa2);
  double fp = dxnorm - radius;
  if (fp <= 0.1 * radius) {
    *lambda = 0;
    return;
  }

  // Lower bound of lambda from the Newton step at lambda = 0 (only if R is nonsingular).
  double lower = 0;
  if (nsing == m) {
    for (int j = 0; j < m; ++j) wa1[j] = diag[pivot[j]] * (wa2[pivot[j]] / dxnorm);
    for (int j = 0; j < m; ++j) {
      double sum = 0;
      for (int i = 0; i < j; ++i) sum += r(i, j) * wa1[i];
      wa1[j] = (wa1[j] - sum) / r(j, j);
    }
    const double temp = wa1.norm();
    lower = ((fp / radius) / temp) / temp;
  }

  // Upper bound from the scaled gradient.
  for (int j = 0; j < m; ++j) {
    double sum = 0;
    for (int i = 0; i <= j; ++i) sum += r(i, j) * system->qtf[i];
    wa1[j] = sum / diag[pivot[j]];
  }
  const double gnorm = wa1.norm();
  double upper = gnorm / radius;
  if (upper == 0) upper = kDwarf / std::min(radius, 0.1);

  double par = std::min(std::max(*lambda, lower), upper);
  if (par == 0) par = gnorm / dxnorm;

  for (int iteration = 1;; ++iteration) {
    if (par == 0) par = std::max(kDwarf, 0.001 * upper);
    const double sqrt_par = std::sqrt(par);
    Eigen::VectorXd& scaled = system->work2;  // reused: overwritten below before reading
    scaled = sqrt_par * diag;
    DampedQrSolve(system, scaled, system->qtf, x);
    dxnorm = ScaledNorm(diag, *x, &wa2);
    const double previous_fp = fp;
    fp = dxnorm - radius;
    if (std::abs(fp) <= 0.1 * radius || (lower == 0 && fp <= previous_fp && previous_fp < 0) ||
        iteration == kMaxNewtonIterations) {
      break;
    }
    // Newton correction of lambda (Moré 1978, eq. 5.5) using S from the solve.
    for (int j = 0; j < m; ++j) wa1[j] = diag[pivot[j]] * (wa2[pivot[j]] / dxnorm);
    for (int j = 0; j < m; ++j) {
      wa1[j] /= system->sdiag[j];
      const double temp = wa1[j];
      for (int i = j + 1; i < m; ++i) wa1[i] -= r(i, j) * temp;
    }
    const double temp = wa1.norm();
    const double correction = ((fp / radius) / temp) / temp;
    if (fp > 0) lower = std::max(lower, par);
    if (fp < 0) upper = std::min(upper, par);
    par = std::max(lower, par + correction);
  }
  *lambda = par;
}

}  // namespace internal
}  // namespace foothold
