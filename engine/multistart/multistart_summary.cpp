#include "engine/multistart/multistart_summary.h"

#include <cmath>
#include <sstream>

namespace foothold {
namespace {

struct StopName {
  MultistartStop stop;
  const char* name;
};

constexpr StopName kStopNames[] = {
    {MultistartStop::kBudget, "budget"},
    {MultistartStop::kDeadline, "deadline"},
    {MultistartStop::kStoppingRule, "stopping_rule"},
    {MultistartStop::kCancelled, "cancelled"},
    {MultistartStop::kInvalidInput, "invalid_input"},
};

void WriteVector(std::ostream& out, const Eigen::VectorXd& v) {
  out << "[";
  for (Eigen::Index j = 0; j < v.size(); ++j) out << (j ? ", " : "") << v[j];
  out << "]";
}

}  // namespace

const char* ToString(MultistartStop stop) {
  for (const auto& entry : kStopNames) {
    if (entry.stop == stop) return entry.name;
  }
  return "unknown";
}

bool MultistartStopFromString(const std::string& text, MultistartStop* stop) {
  for (const auto& entry : kStopNames) {
    if (text == entry.name) {
      *stop = entry.stop;
      return true;
    }
  }
  return false;
}

const StartRecord* MultistartSummary::BestStart() const {
  for (const StartRecord& record : starts) {
    if (record.index == best_start_index) return &record;
  }
  return nullptr;
}

std::string MultistartSummary::BriefReport() const {
  std::ostringstream out;
  out << "multistart " << ToString(stop) << ": " << num_starts_run << "/" << num_starts_planned
      << " starts, " << num_converged << " converged, " << basins.size() << " basins";
  if (!basins.empty()) out << ", best rss " << basins.front().rss;
  if (ambiguous_basins) out << ", ambiguous";
  if (best_basin_single_start) out << ", best basin from one start";
  if (num_runaway_starts > 0) {
    out << ", " << num_runaway_starts << " runaway starts down to rss " << runaway_rss;
  }
  out << ", " << total_seconds * 1e3 << " ms (" << message << ")";
  return out.str();
}

std::string MultistartSummary::FullReport() const {
  std::ostringstream out;
  out << "Multistart\n"
      << "  stop                " << ToString(stop) << " (" << message << ")\n"
      << "  starts              " << num_starts_run << " run of " << num_starts_planned
      << " planned (" << num_candidates << " seeded candidates), " << num_rounds << " rounds of "
      << round_size << "\n"
      << "  converged           " << num_converged << ", non-finite " << num_non_finite << "\n"
      << "  seed, threads       " << seed << ", " << num_threads << "\n"
      << "  stopping rule       n " << rule_num_searches << ", w " << rule_num_basins
      << ", expected basins " << expected_num_basins << ", expected unseen "
      << expected_unseen_basins << ", unobserved share " << expected_unobserved_share << "\n"
      << "  verdict inputs      ambiguous_basins " << (ambiguous_basins ? "yes" : "no")
      << ", best_basin_single_start " << (best_basin_single_start ? "yes" : "no") << ", gap "
      << best_gap_chi2 << (gap_in_chi2_units ? " chi2" : " chi2 (variance estimated)") << "\n"
      << "  runaway starts      " << num_runaway_starts;
  if (num_runaway_starts > 0) {
    out << ", lowest rss " << runaway_rss << " (start " << runaway_start_index
        << "), beyond the box:";
    for (int j : runaway_beyond_box) out << " " << j;
  }
  out << "\n"
      << "  best start          " << best_start_index << "\n"
      << "  time                " << total_seconds << " s\n";
  for (const Basin& basin : basins) {
    out << "  basin " << basin.id << ": rss " << basin.rss << " (+" << basin.delta_rss << "), "
        << basin.num_starts << " starts (" << basin.share * 100 << "%), representative "
        << basin.representative_start << ", parameters ";
    WriteVector(out, basin.parameters);
    out << " +- ";
    WriteVector(out, basin.standard_errors);
    out << "\n";
  }
  for (const StartRecord& record : starts) {
    out << "  start " << record.index << " " << record.origin << ": rss " << record.initial_rss
        << " -> " << record.rss << ", " << ToString(record.termination) << ", "
        << record.num_iterations << " it, " << record.num_evaluations << " ev, basin "
        << record.basin << ", " << record.seconds * 1e3 << " ms\n";
  }
  return out.str();
}

}  // namespace foothold
