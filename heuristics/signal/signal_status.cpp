#include "heuristics/signal/signal_status.h"

#include <iterator>
#include <utility>

namespace foothold {
namespace signal {
namespace {

const std::pair<SignalStatus, const char*> kStatusNames[] = {
    {SignalStatus::kOk, "ok"},
    {SignalStatus::kSizeMismatch, "size_mismatch"},
    {SignalStatus::kNonFinite, "non_finite"},
    {SignalStatus::kInvalidSigma, "invalid_sigma"},
    {SignalStatus::kTooFewPoints, "too_few_points"},
    {SignalStatus::kNotSorted, "not_sorted"},
    {SignalStatus::kAllXEqual, "all_x_equal"},
    {SignalStatus::kConstantY, "constant_y"},
    {SignalStatus::kInvalidOptions, "invalid_options"},
    {SignalStatus::kTooFewValidPoints, "too_few_valid_points"},
    {SignalStatus::kRankDeficient, "rank_deficient"},
    {SignalStatus::kComplexPoles, "complex_poles"},
    {SignalStatus::kNonDecaying, "non_decaying"},
};

}  // namespace

const char* ToString(SignalStatus status) {
  for (const auto& entry : kStatusNames) {
    if (entry.first == status) return entry.second;
  }
  return "unknown";
}

bool SignalStatusFromString(const std::string& text, SignalStatus* status) {
  for (const auto& entry : kStatusNames) {
    if (text == entry.second) {
      *status = entry.first;
      return true;
    }
  }
  return false;
}

}  // namespace signal
}  // namespace foothold
