#pragma once
// A fit request as plain C++ values: the request document of DESIGN.md §3b after decoding,
// and what the CLI flags build. No JSON here; json_codec.h converts.

#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "server/data_table.h"

namespace foothold {

// The model a request names: a catalogue family or an expression.
struct ModelSpec {
  std::string family;                   // catalogue name, or empty for an expression
  std::optional<int> degree;            // polynomial only
  std::optional<int> peaks;             // multi_* only
  bool auto_peaks = false;              // multi_* only: "peaks": "auto"
  std::string expression;               // maths text, or empty for a family
  std::vector<std::string> parameters;  // expression parameter order; empty = first use

  bool IsFamily() const { return !family.empty(); }
};

struct NamedValue {
  std::string name;
  double value = 0;
};

struct NamedBounds {
  std::string name;
  double lower = -std::numeric_limits<double>::infinity();
  double upper = std::numeric_limits<double>::infinity();
};

// Values later work will accept; validation names them so a request is never misread.
constexpr const char* kKnownLosses[] = {"squared", "soft_l1", "huber", "cauchy", "tukey", "l1"};
constexpr const char* kKnownMethods[] = {"lm", "gauss_newton", "bfgs"};
constexpr const char* kKnownIntervals[] = {"wald", "profile"};

// Whether `value` is one of `options` (kKnownLosses, ...), and the options as "a, b, c".
template <size_t N>
bool IsOneOf(const std::string& value, const char* const (&options)[N]) {
  for (const char* option : options) {
    if (value == option) return true;
  }
  return false;
}

template <size_t N>
std::string JoinOptions(const char* const (&options)[N]) {
  std::string joined;
  for (const char* option : options) {
    if (!joined.empty()) joined += ", ";
    joined += option;
  }
  return joined;
}

// Upper limits a request may ask for (the daemon may set lower ones).
constexpr int kMaxStarts = 100000;
constexpr int kMaxThreads = 256;

struct FitRequest {
  // Free text for listing and filtering. Optional.
  std::string label;
  ModelSpec model;
  DataTable data;
  // Column fitted, or an expression in the columns such as "log(y)". Default "y".
  std::string response = "y";
  // Column of per-point sigma. Empty means "sigma" when the data have it, else unweighted.
  std::string sigma_column;
  std::vector<NamedValue> start;
  std::vector<NamedValue> fix;
  std::vector<NamedBounds> bounds;
  // "absolute" or "relative"; empty means absolute when sigma is given.
  std::string sigma_mode;
  // Robust loss: squared, soft_l1, huber, cauchy, tukey or l1 (docs/robust-fitting.md).
  std::string loss = "squared";
  // Scale s of the robust loss in the response's units; <= 0 (the default) means the
  // automatic robust estimate (1.4826 MAD of the residuals, engine/loss).
  double loss_scale = 0.0;
  // Local method: lm (default), gauss_newton or bfgs.
  std::string method = "lm";
  // Number of local fits. 0 (the default) is the automatic budget, max(16, 8 p) capped at
  // 256 for p free parameters, ended earlier by the stopping rule and extended (up to 4x,
  // at most 256) while the best basin is still new (docs/multistart.md); 1 is a single local fit
  // from the best candidate (the user's start, else the best guess).
  int starts = 0;
  // Seed of the random streams; the same request and seed give the same result.
  std::uint64_t seed = 7;
  // Worker threads; 0 (the default) means the hardware's. The result does not depend on it.
  int threads = 0;
  // Wall-clock limit of the whole fit in seconds; infinity means none.
  double deadline_seconds = std::numeric_limits<double>::infinity();
  // Local solver limits (foothold extensions of §3b). Defaults as the solver's.
  int max_iterations = 1000;
  int max_evaluations = 4000;
  // Confidence intervals: "wald" (default, from the covariance) or "profile" (the Wald
  // intervals and, beside them, profile-likelihood intervals: docs/statistics.md).
  std::string intervals = "wald";
  // Model comparison (docs/api.md): when not empty, each of these catalogue families is
  // fitted to the same data with the same options, ranked by AICc, and the result is the
  // winner's with the ranking beside it. `model` is then ignored unless it names one too.
  std::vector<ModelSpec> compare;

  // Checks everything that does not need the model built: one model kind, supported
  // loss/method/starts, limits, finite start/fix values, lower <= upper, no name given
  // twice. The message names the field and the rule.
  bool Validate(std::string* error) const;
};

}  // namespace foothold
