#include "engine/multistart/multistart_options.h"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <thread>

namespace foothold {
namespace {

// Default budget: max(kMinDefaultStarts, kStartsPerFreeParameter * p), at most
// kMaxDefaultStarts. Eight starts per free parameter keep a few Sobol points per
// coordinate direction; the floor lets the stopping rule see one basin repeatedly.
constexpr int kMinDefaultStarts = 16;
constexpr int kStartsPerFreeParameter = 8;
constexpr int kMaxDefaultStarts = 256;
constexpr int kMaxStartsLimit = 100000;
constexpr int kMaxThreads = 256;
constexpr int kMaxRoundSize = 4096;

}  // namespace

const char* ToString(BoxScale scale) {
  switch (scale) {
    case BoxScale::kAuto:
      return "auto";
    case BoxScale::kLinear:
      return "linear";
    case BoxScale::kLog:
      return "log";
  }
  return "unknown";
}

int MultistartOptions::DefaultNumThreads() {
  const unsigned hardware = std::thread::hardware_concurrency();
  return hardware == 0 ? 1 : static_cast<int>(std::min<unsigned>(hardware, kMaxThreads));
}

int MultistartOptions::ResolvedMaxStarts(int num_free) const {
  if (max_starts > 0) return max_starts;
  return std::min(kMaxDefaultStarts,
                  std::max(kMinDefaultStarts, kStartsPerFreeParameter * num_free));
}

int MultistartOptions::ExtendedMaxStarts(int num_free) const {
  const int base = ResolvedMaxStarts(num_free);
  if (max_starts > 0 || budget_extension_factor <= 1) return base;
  return std::max(base, std::min(kMaxDefaultStarts, budget_extension_factor * base));
}

bool MultistartOptions::Validate(std::string* error) const {
  std::ostringstream message;
  std::string nested;
  if (max_starts < 0 || max_starts > kMaxStartsLimit) {
    message << "max_starts = " << max_starts << ": must be in [0, " << kMaxStartsLimit
            << "] (0 means the default)";
  } else if (budget_extension_factor < 1 || budget_extension_factor > 64) {
    message << "budget_extension_factor = " << budget_extension_factor
            << ": must be in [1, 64] (1 turns the extension off)";
  } else if (num_threads < 1 || num_threads > kMaxThreads) {
    message << "num_threads = " << num_threads << ": must be in [1, " << kMaxThreads << "]";
  } else if (round_size < 1 || round_size > kMaxRoundSize) {
    message << "round_size = " << round_size << ": must be in [1, " << kMaxRoundSize << "]";
  } else if (!(deadline_seconds > 0)) {
    message << "deadline_seconds = " << deadline_seconds << ": must be > 0";
  } else if (!(stopping_threshold > 0) || !std::isfinite(stopping_threshold)) {
    message << "stopping_threshold = " << stopping_threshold << ": must be finite and > 0";
  } else if (!(cost_relative_tolerance >= 0) || !(cost_relative_tolerance < 1)) {
    message << "cost_relative_tolerance = " << cost_relative_tolerance << ": must be in [0, 1)";
  } else if (!(basin_stderr_multiple >= 0) || !std::isfinite(basin_stderr_multiple)) {
    message << "basin_stderr_multiple = " << basin_stderr_multiple << ": must be finite and >= 0";
  } else if (!(parameter_relative_tolerance >= 0) || !(parameter_relative_tolerance < 1)) {
    message << "parameter_relative_tolerance = " << parameter_relative_tolerance
            << ": must be in [0, 1)";
  } else if (!(jitter_share >= 0) || !(jitter_share <= 1)) {
    message << "jitter_share = " << jitter_share << ": must be in [0, 1]";
  } else if (!(ambiguity_chi2_gap >= 0) || !std::isfinite(ambiguity_chi2_gap)) {
    message << "ambiguity_chi2_gap = " << ambiguity_chi2_gap << ": must be finite and >= 0";
  } else if (!local.Validate(&nested)) {
    message << "local." << nested;
  } else if (!statistics.Validate(&nested)) {
    message << "statistics." << nested;
  }
  if (message.tellp() == 0) return true;
  if (error) *error = message.str();
  return false;
}

}  // namespace foothold
