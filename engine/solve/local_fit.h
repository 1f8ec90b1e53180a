#pragma once
// One local fit from one start: the entry point multistart and the server call. It runs
// Levenberg–Marquardt over the nonlinear parameters with the linear ones projected out
// (variable projection) where that applies, else plain Levenberg–Marquardt on all of them.
// The method may instead be Gauss–Newton (Armijo line search) or BFGS (Wolfe line search), and
// the loss a robust one (engine/loss): robust fits are iteratively reweighted least squares
// around the chosen method, or for BFGS and a smooth loss a direct minimisation of the loss.
// docs/robust-fitting.md gives the mathematics.

#include <Eigen/Core>
#include <string>

#include "engine/loss/robust_loss.h"
#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"

namespace foothold {

enum class LocalMethod {
  kLevenbergMarquardt,  // "lm"
  kGaussNewton,         // "gauss_newton": engine/solve/gauss_newton.h
  kBfgs,                // "bfgs": engine/solve/bfgs.h
};
const char* ToString(LocalMethod method);
bool LocalMethodFromString(const std::string& text, LocalMethod* method);

struct LocalFitOptions {
  // The Levenberg–Marquardt settings; with projection they apply to the reduced problem
  // (iterations, evaluations and tolerances count over the nonlinear parameters).
  LevenbergMarquardtOptions lm;
  // Solve free, unbounded linear parameters by linear least squares inside each evaluation
  // (Golub & Pereyra 1973, Kaufman 1975). Default true. Ignored where it does not apply.
  bool use_variable_projection = true;
  // The local method. Default Levenberg–Marquardt. Gauss–Newton and BFGS take their limits,
  // tolerances, deadline and callback from `lm` (BFGS gets twice the iterations and
  // evaluations) and never use projection.
  LocalMethod method = LocalMethod::kLevenbergMarquardt;
  // The loss of the standardised residuals e_i = r_i / sigma_i. Default least squares.
  LossKind loss = LossKind::kSquared;
  // Scale s of z = e / s for a robust loss, in units of e; <= 0 (default) means automatic:
  // 1.4826 MAD of the residuals, re-estimated at every reweighting. Must be finite.
  double loss_scale = 0;
  // Reweightings (IRLS iterations) of a robust fit. Default 200. Must be >= 1.
  int max_reweightings = 200;
  // A robust fit has converged when a reweighting moves the parameters by <= this relative
  // to their norm and changes the automatic scale by <= this relative. Default 1e-10; > 0.
  double reweighting_tolerance = 1e-10;

  bool Validate(std::string* error) const;
};

// Minimises from `start` (size p, inside the bounds; the caller validates problem and
// start). Returns the full-size parameters, the rss of the full problem at start and end,
// the solver's counts and termination; the message begins with the method used
// ("variable projection: ..." or "levenberg-marquardt: ...") and, when projection was
// requested but not used, why. Never throws for a numerical outcome. With a robust loss the
// costs are 2 sum_i s^2 rho(e_i / s) at the final scale (the rss for the squared loss), the
// counts add up every reweighting, and the message ends with the loss, the scale and the
// number of reweightings; AssessRobustFit (engine/loss/robust_reweighting.h) at the end point
// gives the weights and outlier flags.
LocalFitSummary RunLocalFit(const Problem& problem, const Eigen::VectorXd& start,
                            const LocalFitOptions& options);

// True when the message of a RunLocalFit summary says projection was used.
bool UsedVariableProjection(const LocalFitSummary& summary);

}  // namespace foothold
