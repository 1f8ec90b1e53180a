#pragma once
// The reference solvers the benchmark times beside foothold, each fitting a BenchProblem's
// closed form from its start:
//   minpack        CMinpack's lmder (MINPACK's C port), analytic Jacobian
//   eigen_lm       Eigen's unsupported LevenbergMarquardt module, analytic Jacobian
//   ceres_point    Ceres Solver, automatic differentiation, one residual block per point
//   ceres_block    Ceres Solver, automatic differentiation, one block for all residuals
//   gsl            GSL gsl_multifit_nlinear, trust-region LM (More scaling, QR)
// Setup that a caller would do once (workspaces, the Ceres problem) happens in the
// constructor; Fit() is what the benchmark times.

#include <memory>
#include <string>
#include <vector>

#include "bench_problems.h"

namespace foothold {
namespace bench {

// The stopping tolerances every solver gets, in its own terms (relative cost change and
// relative step; MINPACK's ftol and xtol). No gradient test beyond the libraries' own.
constexpr double kTolerance = 1e-10;

struct FitResult {
  std::vector<double> parameters;
  double rss = 0;  // sum of squared residuals at the end point
  int iterations = 0;
  int evaluations = 0;           // residual evaluations
  int jacobian_evaluations = 0;  // Jacobian evaluations
  std::string status;
};

class Solver {
 public:
  virtual ~Solver() = default;
  virtual const char* Name() const = 0;
  virtual FitResult Fit() = 0;
};

// Nullptr when the solver does not apply (none today). `problem` must outlive the solver.
std::unique_ptr<Solver> MakeMinpackSolver(const BenchProblem& problem);
std::unique_ptr<Solver> MakeEigenLmSolver(const BenchProblem& problem);
std::unique_ptr<Solver> MakeCeresSolver(const BenchProblem& problem, bool one_block_per_point);
std::unique_ptr<Solver> MakeGslSolver(const BenchProblem& problem);

// The closed forms as a user of those libraries writes them: one exp per point and peak,
// reused for the Jacobian when both are wanted. Residual f_i = model(x_i) - y_i; the
// Jacobian is column-major with leading dimension ld (or row-major when row_major).
void Residuals(const BenchProblem& problem, const double* p, double* f);
void Jacobian(const BenchProblem& problem, const double* p, double* jacobian, int ld,
              bool row_major);

}  // namespace bench
}  // namespace foothold
