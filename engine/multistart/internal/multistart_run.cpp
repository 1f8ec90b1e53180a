#include "engine/multistart/internal/multistart_run.h"

#include <algorithm>
#include <cmath>
#include <deque>
#include <limits>
#include <set>
#include <sstream>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"

namespace foothold {
namespace internal {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Stream index of the Sobol digital shift; start streams use the start index (< 2^31).
constexpr std::uint64_t kShiftStream = ~std::uint64_t{0};
// Jitter perturbs one of the kJitterBasins best basins, chosen uniformly.
constexpr int kJitterBasins = 3;
// Where the model allows it, one generated start in kReseatPeriod re-seats a member.
constexpr int kReseatPeriod = 4;
// Rounds on the pool at once from round 1 on: round r + 1 is planned from the rounds
// before r, so it can run while r's last starts finish (docs/multistart.md, "Rounds and
// threads").
constexpr int kRoundsInFlight = 2;
// At most this many model values (8 bytes each) of weighted curves are kept between rounds.
constexpr Eigen::Index kCurveCacheValues = Eigen::Index{1} << 22;
// Costs within this share of the weighted total sum of squares compare equal (exact fits).
constexpr double kCostFloorShare = 1e-12;

double WeightedTotalSquares(const Dataset& data) {
  const Eigen::Index n = data.response.size();
  if (n == 0) return 0;
  Eigen::VectorXd w2 = Eigen::VectorXd::Ones(n);
  if (data.HasSigma()) w2 = data.sigma.array().square().inverse();
  const double mean = (w2.array() * data.response.array()).sum() / w2.sum();
  return (w2.array() * (data.response.array() - mean).square()).sum();
}

}  // namespace

MultistartRun::MultistartRun(const Problem& problem, const std::vector<StartCandidate>& candidates,
                             const SearchBox& box, const MultistartOptions& options,
                             Clock::time_point started)
    : problem_(problem),
      candidates_(candidates),
      options_(options),
      started_(started),
      box_(ResolveBox(problem, candidates, box)),
      sobol_(std::max(1, problem.NumFree())),
      pool_(std::min(options.num_threads, kRoundsInFlight * options.round_size)) {
  RandomStream shift_stream(options.seed, kShiftStream);
  for (int d = 0; d < sobol_.Dimension(); ++d) {
    sobol_shift_.push_back(static_cast<std::uint32_t>(shift_stream.NextBits() >> 32));
  }
  total_weighted_squares_ = WeightedTotalSquares(problem.data);
  for (int worker = 0; worker < pool_.NumWorkers(); ++worker) {
    worker_models_.push_back(problem.model->Clone());
    worker_problems_.push_back(problem);
    worker_problems_.back().model = worker_models_.back().get();
  }
  best_rss_so_far_ = kNaN;
  can_reseat_ = FindReseatSymmetry(problem, &reseat_symmetry_);
  if (can_reseat_) planning_model_ = problem.model->Clone();
}

bool MultistartRun::IsJitterSlot(int ordinal) const {
  // Generated start number `ordinal` (0-based) is jitter when floor(share * count) steps up
  // there: jitter_share of the generated starts, spread evenly, whatever the round size
  // (share 0.25: ordinals 3, 7, 11, ...). Slots before the first basin are Sobol points.
  const double share = options_.jitter_share;
  return std::floor(share * (ordinal + 1)) > std::floor(share * ordinal);
}

bool MultistartRun::IsReseatSlot(int ordinal) const {
  // Every kReseatPeriod-th generated start that is not a jitter slot (ordinals 1, 5, 9, ...
  // with no jitter; the jitter slots keep their places).
  return !IsJitterSlot(ordinal) && ordinal % kReseatPeriod == 1;
}

bool MultistartRun::IsCancelled() const {
  if (options_.cancel_flag && options_.cancel_flag->load(std::memory_order_relaxed)) return true;
  return options_.is_cancelled && options_.is_cancelled();
}

double MultistartRun::ElapsedSeconds() const {
  return std::chrono::duration<double>(Clock::now() - started_).count();
}

std::vector<MultistartRun::PlannedStart> MultistartRun::PlanRound(int number, int begin, int end) {
  const int num_candidates = static_cast<int>(candidates_.size());
  std::vector<PlannedStart> round;
  for (int index = begin; index < end; ++index) {
    PlannedStart planned;
    planned.index = index;
    planned.round = number;
    if (index < num_candidates) {
      planned.origin = candidates_[index].origin;
      planned.start = ClampStart(problem_, box_, candidates_[index].parameters);
    } else if (can_reseat_ && !summary_.basins.empty() && IsReseatSlot(index - num_candidates)) {
      RandomStream stream(options_.seed, static_cast<std::uint64_t>(index));
      planned.origin = "reseat";
      planned.start = ClampStart(problem_, box_,
                                 ReseatStart(problem_, *planning_model_, box_, reseat_symmetry_,
                                             summary_.basins.front().parameters, &stream));
    } else if (!summary_.basins.empty() && IsJitterSlot(index - num_candidates)) {
      RandomStream stream(options_.seed, static_cast<std::uint64_t>(index));
      const int choices = std::min<int>(kJitterBasins, static_cast<int>(summary_.basins.size()));
      const int pick = std::min(choices - 1, static_cast<int>(stream.NextUniform() * choices));
      const Basin& basin = summary_.basins[pick];
      planned.origin = "jitter";
      planned.start = ClampStart(
          problem_, box_, JitterStart(box_, basin.parameters, basin.standard_errors, &stream));
    } else {
      planned.origin = "sobol";
      planned.start =
          ClampStart(problem_, box_, SobolStart(box_, sobol_, sobol_shift_, num_sobol_planned_++));
    }
    round.push_back(std::move(planned));
  }
  return round;
}

StartRecord MultistartRun::RunStart(const PlannedStart& planned, int worker) {
  LevenbergMarquardtOptions local = options_.local;
  const double remaining = options_.deadline_seconds - ElapsedSeconds();
  local.deadline_seconds = std::min(local.deadline_seconds, std::max(remaining, 1e-9));
  const IterationCallback user_callback = options_.local.callback;
  const int round = planned.round;
  local.callback = [this, &user_callback, round](int iteration, double cost) {
    if (IsCancelled() || IsDiscarded(round)) return false;
    return !user_callback || user_callback(iteration, cost);
  };
  LocalFitOptions fit_options;
  fit_options.lm = local;
  fit_options.use_variable_projection = options_.use_variable_projection;
  fit_options.method = options_.method;
  fit_options.loss = options_.loss;
  fit_options.loss_scale = options_.loss_scale;
  const LocalFitSummary fit = RunLocalFit(worker_problems_[worker], planned.start, fit_options);

  StartRecord record;
  record.index = planned.index;
  record.origin = planned.origin;
  record.start = fit.start;
  record.end = fit.parameters;
  record.initial_rss = fit.initial_cost;
  record.rss = fit.final_cost;
  record.termination = fit.termination;
  record.message = fit.message;
  record.num_iterations = fit.num_iterations;
  record.num_evaluations = fit.num_evaluations;
  record.seconds = fit.total_seconds;
  record.converged = fit.IsConverged() && std::isfinite(fit.final_cost);
  if (fit.termination == Termination::kCancelled && IsCancelled()) saw_cancel_ = true;
  if (fit.termination == Termination::kDeadline && DeadlinePassed()) saw_deadline_ = true;
  return record;
}

void MultistartRun::RunItem(const PlannedStart& planned, int worker, Outcome* outcome) {
  if (IsDiscarded(planned.round)) return;
  if (IsCancelled()) {
    saw_cancel_ = true;
    return;
  }
  if (DeadlinePassed()) {
    saw_deadline_ = true;
    return;
  }
  outcome->record = RunStart(planned, worker);
  outcome->ran = true;
  // A fit stopped because its round is discarded is not a finished start.
  if (IsDiscarded(planned.round)) return;
  std::lock_guard<std::mutex> lock(progress_mutex_);
  ++num_finished_;
  const StartRecord& record = outcome->record;
  if (record.converged && !(record.rss >= best_rss_so_far_)) best_rss_so_far_ = record.rss;
  if (options_.progress) {
    options_.progress(num_finished_, summary_.num_starts_planned, best_rss_so_far_);
  }
}

std::unique_ptr<MultistartRun::RoundInFlight> MultistartRun::Dispatch(int number, int begin,
                                                                      int end) {
  auto round = std::make_unique<RoundInFlight>();
  round->number = number;
  round->end = end;
  round->starts = PlanRound(number, begin, end);
  round->outcomes.resize(round->starts.size());
  RoundInFlight* raw = round.get();
  round->batch =
      pool_.Submit(static_cast<int>(raw->starts.size()), [this, raw](int item, int worker) {
        RunItem(raw->starts[item], worker, &raw->outcomes[item]);
      });
  return round;
}

void MultistartRun::Absorb(RoundInFlight* round) {
  pool_.Wait(round->batch);
  ++summary_.num_rounds;
  for (const Outcome& outcome : round->outcomes) {
    if (outcome.ran) summary_.starts.push_back(outcome.record);
  }
  UpdateBasins();
}

void MultistartRun::Discard(RoundInFlight* round) {
  first_discarded_round_ = std::min(first_discarded_round_.load(), round->number);
  pool_.Drop(round->batch);
  pool_.Wait(round->batch);
}

namespace {

// Standard errors at `params` and whether they are usable (finite, scale estimable).
std::pair<Eigen::VectorXd, bool> ErrorsAt(const Problem& problem, const Eigen::VectorXd& params,
                                          const StatisticsOptions& options) {
  const FitStatistics statistics = ComputeFitStatistics(problem, params, options);
  const bool usable = statistics.is_finite && statistics.has_standard_errors;
  Eigen::VectorXd errors = statistics.standard_errors;
  if (errors.size() != params.size()) errors = Eigen::VectorXd::Constant(params.size(), kNaN);
  return {errors, usable};
}

}  // namespace

void MultistartRun::UpdateBasins() {
  std::vector<EndPoint> points;
  std::vector<int> record_of_point;
  for (size_t r = 0; r < summary_.starts.size(); ++r) {
    StartRecord& record = summary_.starts[r];
    record.basin = -1;
    if (!record.converged) continue;
    auto canonical = canonical_by_start_.find(record.index);
    if (canonical == canonical_by_start_.end()) {
      canonical =
          canonical_by_start_.emplace(record.index, Canonicalize(problem_, record.end)).first;
    }
    points.push_back({record.index, record.rss, canonical->second});
    record_of_point.push_back(static_cast<int>(r));
  }
  BasinTolerances tolerances;
  tolerances.cost_relative = options_.cost_relative_tolerance;
  tolerances.cost_absolute = kCostFloorShare * total_weighted_squares_;
  tolerances.stderr_multiple = options_.basin_stderr_multiple;
  tolerances.parameter_relative = options_.parameter_relative_tolerance;
  tolerances.parameter_scale = box_.upper - box_.lower;
  tolerances.is_free.resize(problem_.NumParameters());
  for (int j = 0; j < problem_.NumParameters(); ++j) tolerances.is_free[j] = !problem_.IsFixed(j);

  auto errors_of_leader = [&](int position) -> Eigen::VectorXd {
    auto found = errors_by_start_.find(points[position].start_index);
    if (found == errors_by_start_.end()) {
      found = errors_by_start_
                  .emplace(points[position].start_index,
                           ErrorsAt(problem_, points[position].canonical, options_.statistics))
                  .first;
    }
    return found->second.first;
  };
  // Curves are kept across rounds (each round re-clusters every end point), within a
  // memory budget; a curve not kept is recomputed, to the same values.
  auto curve_of = [&](int position) -> Eigen::VectorXd {
    const int start = points[position].start_index;
    const auto found = curve_by_start_.find(start);
    if (found != curve_by_start_.end()) return found->second;
    Eigen::VectorXd curve = WeightedCurve(problem_, points[position].canonical);
    if (num_cached_curve_values_ + curve.size() <= kCurveCacheValues) {
      num_cached_curve_values_ += curve.size();
      curve_by_start_.emplace(start, curve);
    }
    return curve;
  };
  const std::vector<Cluster> clusters =
      ClusterEndPoints(points, tolerances, errors_of_leader, curve_of);

  summary_.basins.clear();
  for (size_t c = 0; c < clusters.size(); ++c) {
    const EndPoint& leader = points[clusters[c].leader];
    Basin basin;
    basin.id = static_cast<int>(c);
    basin.rss = leader.rss;
    basin.delta_rss = leader.rss - points[clusters.front().leader].rss;
    basin.num_starts = static_cast<int>(clusters[c].members.size());
    basin.share = static_cast<double>(basin.num_starts) / static_cast<double>(points.size());
    basin.representative_start = leader.start_index;
    basin.parameters = leader.canonical;
    const auto& errors = errors_by_start_.at(leader.start_index);
    basin.standard_errors = errors.first;
    basin.has_standard_errors = errors.second;
    for (int position : clusters[c].members) {
      summary_.starts[record_of_point[position]].basin = basin.id;
    }
    summary_.basins.push_back(std::move(basin));
  }
}

StoppingRuleEstimate MultistartRun::EstimateFromSobolStarts() const {
  // The rule assumes starts drawn uniformly over the region, so only the Sobol starts count:
  // candidates and jitter are aimed at basins already known.
  int n = 0;
  std::set<int> basins;
  for (const StartRecord& record : summary_.starts) {
    if (record.origin != "sobol" || record.basin < 0) continue;
    ++n;
    basins.insert(record.basin);
  }
  return EstimateUnseenMinima(n, static_cast<int>(basins.size()));
}

int MultistartRun::FirstStartOfBestBasin() const {
  int first = -1;
  for (const StartRecord& record : summary_.starts) {
    if (record.basin == 0 && (first < 0 || record.index < first)) first = record.index;
  }
  return first;
}

void MultistartRun::FillVerdict() {
  summary_.best_gap_chi2 = kNaN;
  const bool absolute = problem_.data.HasSigma() && problem_.sigma_mode == SigmaMode::kAbsolute;
  summary_.gap_in_chi2_units = absolute;
  if (summary_.basins.empty()) return;
  const double best = summary_.basins.front().rss;
  const double dof = problem_.data.NumPoints() - problem_.NumFree();
  summary_.best_basin_single_start = summary_.basins.front().num_starts == 1;
  for (size_t b = 1; b < summary_.basins.size(); ++b) {
    const double delta = summary_.basins[b].delta_rss;
    double gap;
    if (absolute) {
      gap = delta;
    } else if (best > 0 && dof > 0) {
      gap = delta * dof / best;  // delta rss over the variance estimate best / dof
    } else {
      gap = delta > 0 ? std::numeric_limits<double>::infinity() : 0;
    }
    if (b == 1) summary_.best_gap_chi2 = gap;
    if (gap < options_.ambiguity_chi2_gap) summary_.ambiguous_basins = true;
  }
}

void MultistartRun::FindRunawayStarts() {
  summary_.num_runaway_starts = 0;
  summary_.runaway_rss = kNaN;
  summary_.runaway_start_index = -1;
  summary_.runaway_beyond_box.clear();
  if (summary_.basins.empty()) return;
  // Below the best basin by more than the tolerance that makes two costs one basin.
  const double best = summary_.basins.front().rss;
  const double below =
      best - options_.cost_relative_tolerance * best - kCostFloorShare * total_weighted_squares_;
  const StartRecord* lowest = nullptr;
  for (const StartRecord& record : summary_.starts) {
    const bool at_limit = record.termination == Termination::kIterationLimit ||
                          record.termination == Termination::kEvaluationLimit;
    if (record.converged || !at_limit || !std::isfinite(record.rss) || !(record.rss < below)) {
      continue;
    }
    ++summary_.num_runaway_starts;
    if (lowest == nullptr || record.rss < lowest->rss) lowest = &record;
  }
  if (lowest == nullptr) return;
  summary_.runaway_rss = lowest->rss;
  summary_.runaway_start_index = lowest->index;
  for (int j : box_.free) {
    const double value = lowest->end[j];
    if (value < box_.lower[j] || value > box_.upper[j]) summary_.runaway_beyond_box.push_back(j);
  }
}

void MultistartRun::ResumeLowestRunaway() {
  FindRunawayStarts();
  const StartRecord* lowest = nullptr;
  for (const StartRecord& record : summary_.starts) {
    if (record.index == summary_.runaway_start_index) lowest = &record;
  }
  if (lowest == nullptr) return;
  PlannedStart planned;
  planned.index = static_cast<int>(summary_.starts.size());
  for (const StartRecord& record : summary_.starts) {
    planned.index = std::max(planned.index, record.index + 1);
  }
  planned.round = -1;  // after the rounds: never discarded
  planned.origin = "resume";
  planned.start = lowest->end;
  // Every round is absorbed or discarded, so worker 0's model is free on this thread.
  StartRecord record = RunStart(planned, 0);
  summary_.starts.push_back(std::move(record));
  {
    std::lock_guard<std::mutex> lock(progress_mutex_);
    ++summary_.num_starts_planned;
  }
  UpdateBasins();
}

MultistartSummary MultistartRun::Execute() {
  const int num_candidates = static_cast<int>(candidates_.size());
  summary_.seed = options_.seed;
  summary_.num_threads = pool_.NumWorkers();
  summary_.round_size = options_.round_size;
  summary_.num_candidates = num_candidates;
  // `budget` is the default (or given) budget; the run may extend it up to `ceiling` while
  // the best basin is still new (MultistartOptions::budget_extension_factor).
  const int budget = std::max(options_.ResolvedMaxStarts(problem_.NumFree()), num_candidates);
  const int ceiling = std::max(options_.ExtendedMaxStarts(problem_.NumFree()), budget);
  int planned = budget;
  summary_.num_starts_planned = planned;
  std::ostringstream message;
  summary_.stop = MultistartStop::kBudget;

  // Rounds are planned, dispatched and absorbed in order on this thread. Round 0 runs
  // alone, so that round 1's jitter sees the candidates' basins. From then on round r + 2
  // is planned once round r is absorbed, and round r + 1 keeps the workers busy meanwhile:
  // a round's content depends on the rounds before it but the one just before (round 1:
  // on round 0), never on timing.
  std::deque<std::unique_ptr<RoundInFlight>> in_flight;
  int next_begin = 0, next_number = 0;
  auto dispatch = [&] {
    while (static_cast<int>(in_flight.size()) < kRoundsInFlight && next_begin < planned &&
           !saw_cancel_ && !saw_deadline_) {
      const int end = std::min(next_begin + options_.round_size, planned);
      in_flight.push_back(Dispatch(next_number++, next_begin, end));
      next_begin = end;
      if (next_number == 1) break;
    }
  };
  if (IsCancelled()) saw_cancel_ = true;
  if (DeadlinePassed()) saw_deadline_ = true;
  dispatch();
  while (!in_flight.empty()) {
    Absorb(in_flight.front().get());
    const int absorbed_end = in_flight.front()->end;
    in_flight.pop_front();
    if (IsCancelled()) saw_cancel_ = true;
    if (DeadlinePassed()) saw_deadline_ = true;
    // Cancelled or past the deadline: the rounds in flight end quickly (their unstarted
    // starts are skipped) and what they completed is kept, as in a round cut short.
    if (saw_cancel_ || saw_deadline_) continue;
    // Past the budget: continue only while the best basin was first reached in the second
    // half of the starts absorbed so far; the round in flight is discarded on stopping.
    if (absorbed_end >= budget && ceiling > budget) {
      const int first = FirstStartOfBestBasin();
      const bool is_new = first >= 0 && 2 * first >= absorbed_end && absorbed_end < ceiling;
      if (!is_new) {
        if (planned > budget) {
          message << "best basin first reached by start " << first << ", settled after "
                  << absorbed_end << " starts (budget " << budget << " extended)";
        }
        for (const auto& round : in_flight) Discard(round.get());
        in_flight.clear();
        break;
      }
      if (planned == budget) {
        planned = ceiling;
        std::lock_guard<std::mutex> lock(progress_mutex_);
        summary_.num_starts_planned = planned;
      }
    }
    if (absorbed_end >= planned) break;
    // Boender & Rinnooy Kan (1987): only at round boundaries, after every candidate ran,
    // on the absorbed rounds only. The round in flight is discarded, whatever it holds.
    if (options_.use_stopping_rule && absorbed_end >= num_candidates) {
      const StoppingRuleEstimate estimate = EstimateFromSobolStarts();
      if (ShouldStop(estimate, options_.stopping_threshold)) {
        summary_.stop = MultistartStop::kStoppingRule;
        message << "expected unseen basins " << estimate.expected_unseen_minima << " < "
                << options_.stopping_threshold << " after " << estimate.num_searches
                << " converged Sobol starts in " << estimate.num_minima << " basins";
        for (const auto& round : in_flight) Discard(round.get());
        in_flight.clear();
        break;
      }
    }
    dispatch();
  }
  if (options_.resume_runaway_start && !saw_cancel_ && !saw_deadline_) ResumeLowestRunaway();
  const int num_run = static_cast<int>(summary_.starts.size());
  if (saw_cancel_) {
    summary_.stop = MultistartStop::kCancelled;
    message << "cancelled by the caller after " << num_run << " starts";
  } else if (saw_deadline_) {
    summary_.stop = MultistartStop::kDeadline;
    message << "elapsed seconds " << ElapsedSeconds() << " > deadline_seconds "
            << options_.deadline_seconds << " after " << num_run << " starts";
  } else if (summary_.stop == MultistartStop::kBudget && message.tellp() == 0) {
    message << "all " << num_run << " planned starts ran";
  }
  // An extended budget that settled early reports the starts it ran as planned.
  if (planned > budget && summary_.stop == MultistartStop::kBudget) {
    summary_.num_starts_planned = num_run;
  }
  summary_.message = message.str();

  summary_.num_starts_run = num_run;
  double best_unconverged = std::numeric_limits<double>::infinity();
  for (const StartRecord& record : summary_.starts) {
    if (record.converged) ++summary_.num_converged;
    if (record.termination == Termination::kNonFiniteModel) ++summary_.num_non_finite;
    if (summary_.basins.empty() && std::isfinite(record.rss) && record.rss < best_unconverged) {
      best_unconverged = record.rss;
      summary_.best_start_index = record.index;
    }
  }
  if (!summary_.basins.empty())
    summary_.best_start_index = summary_.basins.front().representative_start;

  const StoppingRuleEstimate estimate = EstimateFromSobolStarts();
  summary_.rule_num_searches = estimate.num_searches;
  summary_.rule_num_basins = estimate.num_minima;
  summary_.expected_num_basins = estimate.expected_num_minima;
  summary_.expected_unseen_basins = estimate.expected_unseen_minima;
  summary_.expected_unobserved_share = estimate.expected_unobserved_share;
  FillVerdict();
  FindRunawayStarts();
  summary_.total_seconds = ElapsedSeconds();
  return summary_;
}

}  // namespace internal
}  // namespace foothold
