#pragma once
// What a fit produced, as plain values: the best end point with its statistics, the
// basins, the start log and the verdict. json_codec.h turns it into the result document.
// Start records and basins are the multistart driver's own types, so a single fit and a
// multistart run fill the same outcome.

#include <Eigen/Core>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "engine/multistart/multistart_summary.h"
#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"
#include "engine/stats/fit_statistics.h"
#include "engine/stats/profile_likelihood.h"
#include "server/fit_request.h"

namespace foothold {

struct Verdict {
  // Machine-readable findings, most severe first: "not_converged", "at_bound", ...
  std::vector<std::string> flags;
  // One sentence a person can act on.
  std::string summary;
};

struct FitOutcome {
  std::string label;
  ModelSpec model;  // as requested (family options or expression)
  std::vector<std::string> parameter_names;
  std::vector<bool> is_fixed;
  std::vector<std::string> predictor_names;
  std::string response;      // column or expression fitted
  std::string sigma_column;  // empty when unweighted
  SigmaMode sigma_mode = SigmaMode::kAbsolute;
  LocalFitSummary best;       // the local fit that reached the best optimum
  FitStatistics statistics;   // at best.parameters
  std::vector<Basin> basins;  // best first; empty when nothing converged
  std::vector<StartRecord> starts;
  Verdict verdict;
  std::vector<std::string> guessed;   // parameters whose start the guesser chose
  std::vector<std::string> warnings;  // notes for people (from the guesser)
  std::uint64_t seed = 0;
  double elapsed_ms = 0;
  // How the search went (engine/multistart): why it stopped, with its numbers, and the
  // multistart verdict inputs. A single local fit reports stop "budget" with 1 of 1 starts.
  std::string search_stop = "budget";
  std::string search_message;
  int starts_planned = 1;
  int starts_converged = 0;
  bool ambiguous_basins = false;         // another basin fits almost as well
  bool best_basin_single_start = false;  // only one start reached the best basin
  double best_gap_chi2 = 0;              // gap of the second basin, in chi-square units
  // Starts stopped by a solver limit while still descending below the best basin
  // (MultistartSummary::num_runaway_starts), the lowest rss among them (NaN when none) and
  // the parameters of that end point outside the search box, by name.
  int runaway_starts = 0;
  double runaway_rss = std::numeric_limits<double>::quiet_NaN();
  std::vector<std::string> runaway_parameters;
  // The loss and method of every local fit (docs/robust-fitting.md). For a robust loss the
  // scale is the one at best.parameters (automatic: 1.4826 MAD of the residuals), outliers
  // are the points with |e_i / loss_scale| > outlier_cut, and the statistics' covariance is
  // the M-estimator covariance (engine/loss/robust_reweighting.h).
  std::string loss = "squared";
  std::string method = "lm";
  double loss_scale = 0;  // 0 for the squared loss
  bool is_loss_scale_automatic = true;
  double outlier_cut = 0;     // 0 for the squared loss
  std::vector<int> outliers;  // point indices (data order), ascending
  // The intervals asked for: "wald" or "profile" (docs/statistics.md). With "profile" the
  // profile-likelihood intervals at best.parameters are in `profile`: is_computed false with
  // the reason in profile.message when they could not be computed (a fit that did not
  // converge, a robust loss, no estimable scale). Empty for "wald".
  std::string intervals = "wald";
  ProfileLikelihoodSummary profile;

  bool IsConverged() const { return best.IsConverged(); }
  bool IsWeighted() const { return !sigma_column.empty(); }
  bool HasProfile() const { return intervals == "profile"; }
};

}  // namespace foothold
