#pragma once
// Status values shared by the signal tools. A tool never throws on bad data: it returns a
// result whose status says what was wrong and whose message names the value that was.

#include <string>

namespace foothold {
namespace signal {

enum class SignalStatus {
  kOk,
  kSizeMismatch,       // x, y (and sigma) have different lengths
  kNonFinite,          // a NaN or an infinity in x, y or sigma
  kInvalidSigma,       // a sigma that is not > 0
  kTooFewPoints,       // fewer points than the tool needs
  kNotSorted,          // x is not strictly increasing: call SortAndMerge first
  kAllXEqual,          // x has zero span
  kConstantY,          // y has no variation, so there is nothing to estimate
  kInvalidOptions,     // an Options::Validate failure
  kTooFewValidPoints,  // a transform (log, reciprocal) left too few usable points
  kRankDeficient,      // a least-squares design matrix without full column rank
  kComplexPoles,       // matrix pencil: a pole with an imaginary part (oscillation)
  kNonDecaying,        // matrix pencil: a real pole outside (0, 1), i.e. growth or sign flips
};

// The strings are stable identifiers ("ok", "too_few_points", ...).
const char* ToString(SignalStatus status);
bool SignalStatusFromString(const std::string& text, SignalStatus* status);

}  // namespace signal
}  // namespace foothold
