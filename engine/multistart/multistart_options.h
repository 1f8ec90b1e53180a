#pragma once
// Options and inputs of the multistart driver: how many local fits, from where, on how
// many threads, when to stop and how end points are grouped into basins.

#include <Eigen/Core>
#include <atomic>
#include <cstdint>
#include <functional>
#include <limits>
#include <string>
#include <vector>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"

namespace foothold {

// A start proposed by the caller: the user's own start or a guesser's candidate.
struct StartCandidate {
  // "user" or "guess:<name>"; copied into the start log.
  std::string origin;
  // Size p (all parameters). Clamped into the problem's bounds before the fit.
  Eigen::VectorXd parameters;
};

// How a parameter's range is sampled by the quasi-random starts.
enum class BoxScale {
  kAuto,    // logarithmic when lower > 0 and upper / lower > 100 (two decades), else linear
  kLinear,  // uniform in the value
  kLog,     // uniform in log(value); needs 0 < lower
};
const char* ToString(BoxScale scale);  // "auto" | "linear" | "log"

// The region the quasi-random starts cover. Entries of fixed parameters are ignored.
// Empty vectors mean "unbounded" (lower, upper) and "kAuto" (scale). A bound that is
// infinite here and in the problem is derived from the candidates (docs/multistart.md):
//   - a parameter with a finite lower bound >= 0, no finite upper bound and only positive
//     candidate values gets [max(lower, min/100), max * 100] (four decades, sampled on a
//     log scale);
//   - otherwise each missing side becomes min - 2M or max + 2M, where min and max are the
//     candidates' values and M = max |value| (M = 1 when every value is 0 or there is no
//     candidate), then intersected with the problem's bounds.
struct SearchBox {
  Eigen::VectorXd lower;
  Eigen::VectorXd upper;
  std::vector<BoxScale> scale;
};

// Called after every finished start with the number of starts finished, the number
// planned and the best converged rss so far (NaN before the first). Called from the
// worker threads, one call at a time; it must not block for long. It is live: a start of
// the round discarded when the stopping rule fires may have been counted already.
using MultistartProgressCallback =
    std::function<void(int num_finished, int num_planned, double best_rss)>;

struct MultistartOptions {
  // Number of starts. 0 means the default max(16, 8 p) capped at 256, p the number of free
  // parameters. Every seeded candidate runs even when there are more candidates than this.
  // Must be in [0, 100000].
  int max_starts = 0;
  // Extension of the default budget (max_starts == 0 only): when the default budget has
  // run and the best basin was first reached in the second half of the starts so far (the
  // search is still finding better optima), rounds continue, up to budget_extension_factor
  // times the default budget (at most 256), until the best basin has stood for as many
  // starts as it took to find it. Off with factor 1. Default 4. In [1, 64].
  int budget_extension_factor = 4;
  // Seed of every random stream (Sobol digital shift, jitter). Default 7.
  std::uint64_t seed = 7;
  // Worker threads, the calling thread included; at most 2 * round_size are used (two
  // rounds are in flight). Default: hardware concurrency (>= 1). Results do not depend on
  // it. Must be in [1, 256].
  int num_threads = DefaultNumThreads();
  // Starts per scheduling round. Round r's starts depend only on the results of rounds
  // 0 .. r - 2 (round r - 1 is still running when r is planned), so the summary depends on
  // this but not on num_threads. Default 8. In [1, 4096].
  int round_size = 8;
  // Wall-clock limit of the whole run in seconds; infinity means none. Must be > 0.
  double deadline_seconds = std::numeric_limits<double>::infinity();

  // Boender & Rinnooy Kan (1987) stopping rule, evaluated at round boundaries after every
  // seeded candidate ran: stop when the posterior expected number of unseen basins
  // w (w + 1) / (n - w - 2) is below stopping_threshold; the round in flight is then
  // discarded. Default on, threshold 0.5 (> 0).
  bool use_stopping_rule = true;
  double stopping_threshold = 0.5;

  // After the rounds, the lowest runaway start (stopped by the iteration or evaluation
  // limit below the best basin, MultistartSummary::num_runaway_starts) runs once more from
  // its end point with a fresh solver budget, origin "resume": a slow fit then settles
  // into the basin it was heading for, and a fit on a ridge to infinity stays a runaway
  // start, further out. Not after a cancellation or the deadline. Default on.
  bool resume_runaway_start = true;

  // Two converged end points share a basin when their rss agree within
  // cost_relative_tolerance * max(rss) (plus 1e-12 of the weighted total sum of squares, so
  // exact fits compare equal) and, for every free parameter, the canonical values differ by
  // at most max(basin_stderr_multiple * standard error of the basin's best point,
  // parameter_relative_tolerance * max(|a|, |b|, box width)). Defaults 1e-6, 3, 1e-4.
  double cost_relative_tolerance = 1e-6;
  double basin_stderr_multiple = 3.0;
  double parameter_relative_tolerance = 1e-4;

  // Share of the starts after the seeded candidates that perturb the best basins found so
  // far (the rest are Sobol points). Default 0.25. In [0, 1].
  double jitter_share = 0.25;

  // Another basin is "ambiguous" when its gap to the best is below this many units of
  // chi-square: delta rss < gap with absolute sigma, delta rss * dof / best rss < gap
  // otherwise (the variance estimated by the best reduced chi-square). Default 1. >= 0.
  double ambiguity_chi2_gap = 1.0;

  // Options of every local fit. Its callback, when set, is called as well as the driver's
  // own cancellation check (from the worker threads concurrently, so it must be
  // thread-safe); its deadline is shortened to what remains of deadline_seconds.
  LevenbergMarquardtOptions local;
  // Each local fit projects out free, unbounded linear parameters (variable projection,
  // engine/solve/local_fit.h). Default true; the start log records full parameters either way.
  bool use_variable_projection = true;
  // Method, loss and loss scale of every local fit (LocalFitOptions, engine/solve/local_fit.h).
  // Defaults: Levenberg–Marquardt, least squares, automatic scale.
  LocalMethod method = LocalMethod::kLevenbergMarquardt;
  LossKind loss = LossKind::kSquared;
  double loss_scale = 0;
  // Options of the statistics at each basin's representative point (standard errors).
  StatisticsOptions statistics;

  MultistartProgressCallback progress;
  // Cancellation from another thread: the run stops when *cancel_flag becomes true or
  // is_cancelled() returns true. Checked between local iterations and between starts, from
  // the worker threads concurrently: is_cancelled must be thread-safe.
  const std::atomic<bool>* cancel_flag = nullptr;
  std::function<bool()> is_cancelled;

  // The number of starts max_starts resolves to for `num_free` free parameters.
  int ResolvedMaxStarts(int num_free) const;
  // The most starts an extended default budget may reach (ResolvedMaxStarts when
  // max_starts is given or the factor is 1).
  int ExtendedMaxStarts(int num_free) const;
  // Names the field, its value and the rule on the first violation.
  bool Validate(std::string* error) const;

  static int DefaultNumThreads();
};

}  // namespace foothold
