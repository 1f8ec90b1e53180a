#include "engine/solve/levenberg_marquardt.h"

#include <Eigen/QR>
#include <chrono>
#include <cmath>
#include <sstream>

#include "engine/solve/internal/damped_solve.h"
#include "engine/solve/internal/lm_state.h"

namespace foothold {

bool LevenbergMarquardtOptions::Validate(std::string* error) const {
  std::ostringstream message;
  if (max_iterations < 0) {
    message << "max_iterations = " << max_iterations << ": must be >= 0";
  } else if (max_evaluations < 1) {
    message << "max_evaluations = " << max_evaluations << ": must be >= 1";
  } else if (!(cost_tolerance >= 0)) {
    message << "cost_tolerance = " << cost_tolerance << ": must be >= 0";
  } else if (!(step_tolerance >= 0)) {
    message << "step_tolerance = " << step_tolerance << ": must be >= 0";
  } else if (!(gradient_tolerance >= 0)) {
    message << "gradient_tolerance = " << gradient_tolerance << ": must be >= 0";
  } else if (!(initial_radius_factor > 0) || !std::isfinite(initial_radius_factor)) {
    message << "initial_radius_factor = " << initial_radius_factor << ": must be finite and > 0";
  } else if (!(geodesic_max_ratio > 0)) {
    message << "geodesic_max_ratio = " << geodesic_max_ratio << ": must be > 0";
  } else if (!(deadline_seconds > 0)) {
    message << "deadline_seconds = " << deadline_seconds << ": must be > 0";
  }
  if (message.tellp() == 0) return true;
  if (error) *error = message.str();
  return false;
}

std::string LocalFitSummary::BriefReport() const {
  std::ostringstream out;
  out << ToString(termination) << ": rss " << initial_cost << " -> " << final_cost << " in "
      << num_iterations << " iterations, " << num_evaluations << " evaluations, "
      << total_seconds * 1e3 << " ms";
  return out.str();
}

std::string LocalFitSummary::FullReport() const {
  std::ostringstream out;
  out << "Levenberg-Marquardt local fit\n"
      << "  termination         " << ToString(termination) << " (" << message << ")\n"
      << "  initial rss         " << initial_cost << "\n"
      << "  final rss           " << final_cost << "\n"
      << "  iterations          " << num_iterations << "\n"
      << "  evaluations         " << num_evaluations << "\n"
      << "  jacobian evaluations " << num_jacobian_evaluations << "\n"
      << "  time                " << total_seconds << " s\n";
  for (Eigen::Index j = 0; j < parameters.size(); ++j) {
    out << "  p[" << j << "] " << start[j] << " -> " << parameters[j] << "\n";
  }
  return out.str();
}

namespace {

using Clock = std::chrono::steady_clock;

double SecondsSince(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

std::string Format(const char* what, double value, const char* relation, double limit) {
  std::ostringstream out;
  out << what << " " << value << " " << relation << " " << limit;
  return out.str();
}

}  // namespace

LocalFitSummary MinimizeLevenbergMarquardt(const Problem& problem, const Eigen::VectorXd& start,
                                           const LevenbergMarquardtOptions& options) {
  const Clock::time_point started = Clock::now();
  internal::LmState state(problem, start);
  if (options.use_geodesic_acceleration) state.KeepFullQ();
  LocalFitSummary summary;
  summary.start = start;

  auto finish = [&](Termination termination, std::string message) {
    summary.termination = termination;
    summary.message = std::move(message);
    summary.parameters = state.x;
    summary.final_cost = state.fnorm * state.fnorm;
    summary.num_evaluations = state.num_evaluations;
    summary.num_jacobian_evaluations = state.num_jacobian_evaluations;
    summary.total_seconds = SecondsSince(started);
    return summary;
  };

  // The start is evaluated with its Jacobian: the first iteration needs both.
  if (!state.EvaluateStart()) {
    summary.initial_cost = std::numeric_limits<double>::quiet_NaN();
    state.fnorm = std::numeric_limits<double>::quiet_NaN();
    return finish(Termination::kNonFiniteModel, "the model is not finite at the start point");
  }
  summary.initial_cost = state.fnorm * state.fnorm;
  if (state.free.empty()) {
    return finish(Termination::kNoFreeParameters, "every parameter is fixed");
  }

  constexpr double kEpsilon = std::numeric_limits<double>::epsilon();
  // Smallest actual / predicted reduction that accepts a step (MINPACK's 1e-4).
  constexpr double kAcceptRatio = 1e-4;
  bool first_iteration = true;
  double radius = 0;
  double lambda = 0;

  while (true) {
    if (state.fnorm == 0) return finish(Termination::kCostConverged, "residual is exactly zero");
    if (summary.num_iterations >= options.max_iterations) {
      return finish(Termination::kIterationLimit,
                    Format("iterations", summary.num_iterations, ">=", options.max_iterations));
    }
    if (options.callback && !options.callback(summary.num_iterations, state.fnorm * state.fnorm)) {
      return finish(Termination::kCancelled, "cancelled by the caller");
    }
    if (SecondsSince(started) > options.deadline_seconds) {
      return finish(Termination::kDeadline, Format("elapsed seconds", SecondsSince(started), ">",
                                                   options.deadline_seconds));
    }
    // Accepted points have a finite Jacobian (TrialJacobianIsFinite), so only the start
    // can fail here.
    if (!state.EvaluateJacobian()) {
      return finish(Termination::kNonFiniteModel, "the Jacobian is not finite at the start point");
    }
    ++summary.num_iterations;

    // Parameters held at a bound by the gradient leave the working set for this iteration.
    if (!state.SelectWorkingSet()) {
      return finish(Termination::kGradientConverged,
                    "every free parameter is held at a bound by the gradient");
    }
    state.Factorize();
    if (first_iteration) {
      state.InitialiseScaling();
      const double xnorm = state.ScaledParameterNorm();
      radius = options.initial_radius_factor * xnorm;
      if (radius == 0) radius = options.initial_radius_factor;
    }
    const double gnorm = state.ScaledGradientNorm();
    if (gnorm <= options.gradient_tolerance) {
      return finish(Termination::kGradientConverged,
                    Format("scaled gradient", gnorm, "<=", options.gradient_tolerance));
    }
    state.UpdateScaling();

    // Inner loop: shrink the trust region until a step is accepted.
    while (true) {
      internal::TrialStep trial = state.ComputeTrialStep(radius, &lambda, options);
      if (first_iteration) radius = std::min(radius, trial.scaled_step_norm);
      // A step the linear model does not predict to descend (a clipped or accelerated step
      // can point uphill) is a failure whatever the actual change: actual / predicted > 0
      // with both negative would otherwise accept a cost increase.
      double ratio = trial.predicted > 0 ? trial.actual / trial.predicted : 0;
      // A trial whose values are finite but whose Jacobian is not (a width on its bound 0)
      // cannot be iterated from: it fails like a non-finite trial, and the radius shrinks.
      if (ratio >= kAcceptRatio && !state.TrialJacobianIsFinite()) {
        state.MarkTrialFailed(&trial);
        ratio = 0;
      }

      // Trust-region update, Moré (1978) section 4 (MINPACK's rules).
      if (ratio <= 0.25) {
        double factor = 0.5;
        if (trial.actual < 0)
          factor = 0.5 * trial.directional / (trial.directional + 0.5 * trial.actual);
        if (0.1 * trial.fnorm >= state.fnorm || factor < 0.1) factor = 0.1;
        radius = factor * std::min(radius, trial.scaled_step_norm / 0.1);
        lambda /= factor;
      } else if (lambda == 0 || ratio >= 0.75) {
        radius = trial.scaled_step_norm / 0.5;
        lambda *= 0.5;
      }
      const bool accepted = ratio >= kAcceptRatio && trial.actual > 0;
      if (accepted) {
        state.Accept();
        first_iteration = false;
      }
      const double xnorm = state.ScaledParameterNorm();

      if (std::abs(trial.actual) <= options.cost_tolerance &&
          trial.predicted <= options.cost_tolerance && 0.5 * ratio <= 1) {
        return finish(
            Termination::kCostConverged,
            Format("relative cost change", std::abs(trial.actual), "<=", options.cost_tolerance));
      }
      if (radius <= options.step_tolerance * xnorm) {
        return finish(Termination::kStepConverged,
                      Format("relative step", radius / std::max(xnorm, kEpsilon),
                             "<=", options.step_tolerance));
      }
      if (state.num_evaluations >= options.max_evaluations) {
        return finish(Termination::kEvaluationLimit,
                      Format("evaluations", state.num_evaluations, ">=", options.max_evaluations));
      }
      // Tolerances below what double precision resolves (MINPACK info 6-8).
      if (std::abs(trial.actual) <= kEpsilon && trial.predicted <= kEpsilon && 0.5 * ratio <= 1) {
        return finish(
            Termination::kCostConverged,
            Format("relative cost change", std::abs(trial.actual), "<= machine epsilon", kEpsilon));
      }
      if (radius <= kEpsilon * xnorm) {
        return finish(Termination::kStepConverged,
                      Format("relative step", radius / std::max(xnorm, kEpsilon),
                             "<= machine epsilon", kEpsilon));
      }
      if (accepted) break;
      if (options.callback &&
          !options.callback(summary.num_iterations, state.fnorm * state.fnorm)) {
        return finish(Termination::kCancelled, "cancelled by the caller");
      }
      if (SecondsSince(started) > options.deadline_seconds) {
        return finish(Termination::kDeadline, Format("elapsed seconds", SecondsSince(started), ">",
                                                     options.deadline_seconds));
      }
    }
  }
}

}  // namespace foothold
