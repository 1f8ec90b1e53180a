#pragma once
// Starting guesses derived from the data: the public entry points of the heuristics layer.
// A guess never contains NaN/Inf and always lies inside the bounds it returns.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/model.h"
#include "heuristics/families/catalogue.h"

namespace foothold {

// One named candidate; the start log shows it as "guess:<name>".
struct GuessCandidate {
  std::string name;            // e.g. "peaks", "moments", "loglinear", "periodogram"
  Eigen::VectorXd parameters;  // size p, in the model's parameter order
  double rss = 0;              // sum of weighted squared residuals at the candidate
};

struct GuessResult {
  // Best first (lowest rss), at least one on success.
  std::vector<GuessCandidate> candidates;
  // Bounds the guess assumes (family defaults, tightened where the data say so, e.g. a
  // center inside a widened data range); the request's own bounds override them later.
  Eigen::VectorXd lower;
  Eigen::VectorXd upper;
  // Typical magnitude of each parameter (> 0), for quasi-random search boxes and jitter.
  Eigen::VectorXd scale;
  // Whether a parameter is best sampled on a log scale (positive, spanning decades).
  std::vector<bool> log_scale;
  // Things a person should know ("constant response: amplitude guessed as 0").
  std::vector<std::string> warnings;
};

struct GuessOptions {
  // Largest number of candidates returned. Default 8. Must be >= 1.
  int max_candidates = 8;
  bool Validate(std::string* error) const;
};

// Guesses for a catalogue family. `data` holds the family's predictor "x" and the response
// (sigma optional). `lower`/`upper` (size p or empty) are the request's bounds, which
// candidates must respect. False with a precise message when the data cannot support the
// family (e.g. "power_law needs x > 0: 12 of 40 points have x <= 0").
bool GuessFamily(const FamilyRequest& request, const Model& model, const Dataset& data,
                 const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                 const GuessOptions& options, GuessResult* out, std::string* error);

// Resolves peaks = auto for multi_gaussian / multi_lorentzian: detects peaks, fits k = 1..K
// and keeps the k with the lowest AICc. Writes request->peaks and clears auto_peaks.
bool ResolveAutoPeaks(const Dataset& data, FamilyRequest* request, std::string* error);

// Guesses for an arbitrary model (expressions): scales from the data ranges, parameters
// the model is linear in solved by linear least squares for given nonlinear ones, the
// nonlinear ones sampled over wide log-scaled ranges unless bounded.
bool GuessGeneric(const Model& model, const Dataset& data, const Eigen::VectorXd& lower,
                  const Eigen::VectorXd& upper, const GuessOptions& options, GuessResult* out,
                  std::string* error);

}  // namespace foothold
