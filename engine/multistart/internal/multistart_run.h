#pragma once
// One multistart run: the round loop behind RunMultistart (inputs already validated).

#include <Eigen/Core>
#include <atomic>
#include <chrono>
#include <limits>
#include <map>
#include <memory>
#include <mutex>
#include <vector>

#include "engine/multistart/internal/basin_clustering.h"
#include "engine/multistart/internal/reseat_start.h"
#include "engine/multistart/internal/sobol_sequence.h"
#include "engine/multistart/internal/start_schedule.h"
#include "engine/multistart/internal/stopping_rule.h"
#include "engine/multistart/internal/thread_pool.h"
#include "engine/multistart/multistart_options.h"
#include "engine/multistart/multistart_summary.h"

namespace foothold {
namespace internal {

class MultistartRun {
 public:
  using Clock = std::chrono::steady_clock;

  MultistartRun(const Problem& problem, const std::vector<StartCandidate>& candidates,
                const SearchBox& box, const MultistartOptions& options, Clock::time_point started);

  MultistartSummary Execute();

 private:
  struct PlannedStart {
    int index = 0;
    int round = 0;
    std::string origin;
    Eigen::VectorXd start;
  };
  // What happened to one planned start of a round.
  struct Outcome {
    bool ran = false;
    StartRecord record;
  };
  // A round on the pool: its starts, their outcomes (index order) and the pool's batch.
  struct RoundInFlight {
    int number = 0;
    int end = 0;  // one past its last start index
    std::vector<PlannedStart> starts;
    std::vector<Outcome> outcomes;
    int batch = 0;
  };

  // The starts of indices [begin, end): candidates, then Sobol points and jitter whose
  // content depends only on the basins of the rounds absorbed so far.
  std::vector<PlannedStart> PlanRound(int number, int begin, int end);
  // Plans round `number` from [begin, end) and queues it on the pool.
  std::unique_ptr<RoundInFlight> Dispatch(int number, int begin, int end);
  // Waits for `round`, appends the starts that ran (index order) to the summary and
  // re-clusters.
  void Absorb(RoundInFlight* round);
  // Drops `round`'s unstarted items, stops its running fits and waits for them; nothing of
  // it reaches the summary.
  void Discard(RoundInFlight* round);
  // One start on `worker`; skipped (ran = false) once cancelled, past the deadline or when
  // its round is discarded.
  void RunItem(const PlannedStart& planned, int worker, Outcome* outcome);
  StartRecord RunStart(const PlannedStart& planned, int worker);
  // Re-clusters every converged start and sets summary_.basins and the records' basin ids.
  void UpdateBasins();
  StoppingRuleEstimate EstimateFromSobolStarts() const;
  // Index of the first start that reached the best basin (basin 0), -1 when none converged.
  int FirstStartOfBestBasin() const;
  void FillVerdict();
  // Sets the summary's runaway fields from the starts that ran and the basins.
  void FindRunawayStarts();
  // Runs the lowest runaway start on from its end point (resume_runaway_start) and
  // re-clusters; the pool is idle by then.
  void ResumeLowestRunaway();

  bool IsDiscarded(int round) const {
    return round >= first_discarded_round_.load(std::memory_order_relaxed);
  }
  // Whether generated start `ordinal` (counted after the candidates) perturbs a basin.
  bool IsJitterSlot(int ordinal) const;
  // Whether it re-seats a member of the best basin (only when can_reseat_).
  bool IsReseatSlot(int ordinal) const;
  bool IsCancelled() const;
  double ElapsedSeconds() const;
  bool DeadlinePassed() const { return ElapsedSeconds() > options_.deadline_seconds; }

  const Problem& problem_;
  const std::vector<StartCandidate>& candidates_;
  const MultistartOptions& options_;
  Clock::time_point started_;
  ResolvedBox box_;
  SobolSequence sobol_;
  std::vector<std::uint32_t> sobol_shift_;
  std::uint64_t num_sobol_planned_ = 0;
  double total_weighted_squares_ = 0;

  // Re-seat starts (reseat_start.h), when the model allows them.
  bool can_reseat_ = false;
  PermutationSymmetry reseat_symmetry_;
  std::unique_ptr<Model> planning_model_;  // evaluates residuals while planning a round

  std::vector<std::unique_ptr<Model>> worker_models_;
  std::vector<Problem> worker_problems_;
  // After the workers' models and problems, so that its threads are joined first.
  ThreadPool pool_;

  // Progress, shared by the workers.
  std::mutex progress_mutex_;
  int num_finished_ = 0;
  double best_rss_so_far_ = 0;
  std::atomic<bool> saw_cancel_{false};
  std::atomic<bool> saw_deadline_{false};
  // Rounds numbered this or higher are being discarded (the stopping rule fired).
  std::atomic<int> first_discarded_round_{std::numeric_limits<int>::max()};

  // Standard errors at each basin representative, by start index, computed once.
  std::map<int, std::pair<Eigen::VectorXd, bool>> errors_by_start_;
  // Canonical end point of every converged start, by start index, computed once.
  std::map<int, Eigen::VectorXd> canonical_by_start_;
  // Weighted curve at converged end points, by start index (same-curve clustering).
  std::map<int, Eigen::VectorXd> curve_by_start_;
  Eigen::Index num_cached_curve_values_ = 0;
  MultistartSummary summary_;
};

}  // namespace internal
}  // namespace foothold
