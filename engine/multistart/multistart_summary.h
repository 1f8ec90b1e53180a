#pragma once
// What a multistart run returns: the log of every start, the basins, the best start,
// why the run stopped and the inputs of the verdict.

#include <Eigen/Core>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "engine/solve/termination.h"

namespace foothold {

// Why the driver stopped scheduling starts.
enum class MultistartStop {
  kBudget,        // every planned start ran
  kDeadline,      // deadline_seconds elapsed
  kStoppingRule,  // the Bayesian stopping rule fired
  kCancelled,     // the caller cancelled
  kInvalidInput,  // nothing ran: see MultistartSummary::message
};
const char* ToString(MultistartStop stop);  // "budget" | "deadline" | ... | "invalid_input"
bool MultistartStopFromString(const std::string& text, MultistartStop* stop);

// One local fit in the start log.
struct StartRecord {
  int index = 0;           // position in the schedule (seeded candidates first)
  std::string origin;      // "user" | "guess:<name>" | "sobol" | "jitter" | "reseat" | "resume"
  Eigen::VectorXd start;   // size p, inside the bounds
  Eigen::VectorXd end;     // size p, as the solver left it (not canonicalised)
  double initial_rss = 0;  // NaN when the model is not finite at the start
  double rss = 0;          // at the end point
  Termination termination = Termination::kIterationLimit;
  std::string message;  // the solver's reason with its numbers
  int num_iterations = 0;
  int num_evaluations = 0;
  double seconds = 0;      // wall time of this fit (the only field that varies run to run)
  bool converged = false;  // IsConverged(termination) and a finite rss
  int basin = -1;          // id into MultistartSummary::basins, -1 when not converged
};

// A distinct optimum: the converged starts that end there, modulo symmetries.
struct Basin {
  int id = 0;  // 0 is the best; ids follow increasing rss
  // The representative is the basin's lowest-rss start (ties: lowest index); its basin
  // may hold starts whose parameters differ but whose curves agree (same-curve merge).
  double rss = 0;                 // of the representative
  double delta_rss = 0;           // rss - rss of basin 0
  int num_starts = 0;             // converged starts in this basin
  double share = 0;               // num_starts / converged starts
  int representative_start = -1;  // StartRecord::index of the representative
  // The representative end point in canonical form: Model::CanonicalizeParameters inside
  // the bounds (sine amplitude >= 0, phase in [-pi, pi), ...), then peaks by center.
  Eigen::VectorXd parameters;
  // From ComputeFitStatistics at `parameters`; NaN where not identifiable, 0 when fixed.
  Eigen::VectorXd standard_errors;
  bool has_standard_errors = false;
};

struct MultistartSummary {
  MultistartStop stop = MultistartStop::kBudget;
  // Why it stopped, with numbers ("expected unseen basins 0.33 < 0.5 after ..."), or the
  // input error when stop == kInvalidInput.
  std::string message;

  std::vector<StartRecord> starts;  // in index order; starts never begun are absent
  std::vector<Basin> basins;        // best first
  // StartRecord::index of the best converged start (basin 0's representative); when no
  // start converged, the run start with the lowest finite rss; -1 when there is none.
  int best_start_index = -1;

  int num_candidates = 0;      // seeded candidates given
  int num_starts_planned = 0;  // max(resolved max_starts, candidates)
  int num_starts_run = 0;      // records in `starts`
  int num_converged = 0;
  int num_non_finite = 0;  // starts where the model was not finite
  int num_rounds = 0;
  std::uint64_t seed = 0;
  int num_threads = 0;  // used; does not change any field above or below
  int round_size = 0;

  // Stopping-rule quantities for the starts that ran (NaN when undefined):
  // n converged Sobol starts, w distinct basins among them.
  int rule_num_searches = 0;
  int rule_num_basins = 0;
  double expected_num_basins = 0;        // w (n - 1) / (n - w - 2)
  double expected_unseen_basins = 0;     // w (w + 1) / (n - w - 2)
  double expected_unobserved_share = 0;  // w (w + 1) / (n (n - 1))

  // Verdict inputs.
  bool ambiguous_basins = false;         // another basin within ambiguity_chi2_gap
  bool best_basin_single_start = false;  // basin 0 was reached by one start only
  bool gap_in_chi2_units = false;        // true: absolute sigma; false: rss-relative gap
  double best_gap_chi2 = 0;              // gap of basin 1 in chi-square units (NaN if none)
  // Runaway starts: stopped by the iteration or evaluation limit, still descending, at an
  // rss below the best basin's by more than the basin tolerance. Such a path usually runs
  // along a ridge toward parameter values at infinity (the model's limit fits better than
  // any finite optimum), so the best basin is not the lowest cost the model reaches.
  int num_runaway_starts = 0;
  double runaway_rss = std::numeric_limits<double>::quiet_NaN();  // lowest of their rss
  int runaway_start_index = -1;  // StartRecord::index of that start
  // Free parameters of that start's end point outside the search box (indices, ascending):
  // the ones running off.
  std::vector<int> runaway_beyond_box;

  double total_seconds = 0;

  bool IsValid() const { return stop != MultistartStop::kInvalidInput; }
  const StartRecord* BestStart() const;
  // One line for a log: stop reason, counts, basins, best rss.
  std::string BriefReport() const;
  // Several lines: the above, every basin, and the start log.
  std::string FullReport() const;
};

}  // namespace foothold
