#pragma once
// The Levenberg–Marquardt subproblem on the small triangular factor, after Moré (1978)
// and the MINPACK routines qrsolv and lmpar that implement it.
//
// With J P = Q R (pivoted QR of the m working columns), the damped step solves
//   min || J s + f ||^2 + lambda || D s ||^2
// using only R (m x m), the pivot, D and Q^T f, so a rejected trial step costs O(m^2)
// instead of another factorisation of the n x m Jacobian.

#include <Eigen/Core>

namespace foothold {
namespace internal {

// Scratch and factor for one subproblem. `r` holds R in its upper triangle; the strict
// lower triangle and `sdiag` receive the factor S of R^T R + lambda P^T D^2 P.
struct DampedSystem {
  Eigen::MatrixXd r;         // m x m
  Eigen::VectorXi pivot;     // pivot[j] = original column of pivoted column j
  Eigen::VectorXd qtf;       // first m entries of Q^T f
  Eigen::VectorXd sdiag;     // m
  Eigen::VectorXd work1;     // m
  Eigen::VectorXd work2;     // m
  Eigen::VectorXd r_diag;    // m, saved diagonal of R

  void Resize(int m);
  int Size() const { return static_cast<int>(r.cols()); }
};

// Solves min ||R z - b||^2 + ||diag_scaled P z||^2 for x = P z, given b = qtb
// (MINPACK qrsolv). `diag_scaled` is sqrt(lambda) * D in original column order.
void DampedQrSolve(DampedSystem* system, const Eigen::VectorXd& diag_scaled,
                   const Eigen::VectorXd& qtb, Eigen::VectorXd* x);

// Finds lambda >= 0 with ||D x|| within 10% of `radius` (or lambda = 0 when the
// Gauss–Newton step fits), and the solution x of the damped problem for -f, i.e. the
// step is -x. Moré (1978) section 5; MINPACK lmpar. `lambda` is the previous value on
// entry (a warm start) and the new one on exit.
void FindDampedStep(DampedSystem* system, const Eigen::VectorXd& diag, double radius,
                    double* lambda, Eigen::VectorXd* x);

}  // namespace internal
}  // namespace foothold
