#pragma once
// The multistart search box derived from a guess: the `foothold fit` path and the guess
// timing bench use the same one.

#include <Eigen/Core>
#include <vector>

#include "engine/multistart/multistart.h"
#include "engine/solve/problem.h"

namespace foothold {

// The search box of a fit from the guesser's result: for each free parameter with an
// infinite bound, the candidates' range [v_min, v_max] (clamped into the bounds) widened
// by 2 max(M, s) on every open side, M = max |v| and s the guesser's typical magnitude;
// a parameter the guesser samples on a log scale (positive, lower bound >= 0, no upper
// bound) gets [min(v_min, s) / 100, max(v_max, s) * 100] instead. Finite bounds are left to
// the engine (infinite entries). docs/multistart.md, "Adversarial corpus", says why.
SearchBox SearchBoxFromGuess(const Problem& problem, const std::vector<StartCandidate>& candidates,
                             const Eigen::VectorXd& scale, const std::vector<bool>& log_scale);

}  // namespace foothold
