// Guesses for the decays. Single decays: the baseline from the tail, then the
// log-linearisation ln(y - b) = ln A - x / tau; the matrix pencil with an offset; and a
// profile over tau with amplitude and baseline solved linearly. Two decays: the pencil's two
// rates; a "split" fit of the late window (the slow component) and then of the early
// window's remainder (the fast one); and a profile over (tau1, tau2). Stretched decays: the
// linearisation ln(-ln((y - b) / A)) = beta ln x - beta ln tau and profiles at fixed betas.

#include <algorithm>
#include <cmath>
#include <vector>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/linearise.h"
#include "heuristics/signal/matrix_pencil.h"

namespace foothold {
namespace guess {
namespace {

// Lifetimes are sought between these multiples of the x span.
constexpr double kTauLowShare = 1e-3;
constexpr double kTauHighShare = 1e2;
// Share of the points at the end taken as the baseline level.
constexpr double kTailShare = 0.1;
// The late window (slow component) and the early window (fast component) of "split".
constexpr double kLateStart = 0.35;
constexpr double kEarlyEnd = 0.35;
constexpr int kProfilePoints = 250;
constexpr int kPolishEvaluations = 100;
// The pencil's SVD costs O(N^3): 120 box means carry the rates (the corpus's fastest
// lifetime, 3% of the span, still spans several samples) at a fifth of the cost of 200.
constexpr int kPencilSamples = 120;

// Times measured from the first x, as the decays' amplitudes are values at x = 0.
struct Window {
  Eigen::VectorXd x, y, w;
};

// A lifetime below the typical first spacing (the mean of the first four) is seen by one
// point only: it fits that point's noise, not a decay.
double MinResolvableTau(const Curve& curve) {
  const int last = std::min(4, curve.NumPoints() - 1);
  return last > 0 ? (curve.x[last] - curve.x[0]) / last : 0.0;
}

// Shortest lifetime sought: a share of the span, and never below what the sampling resolves.
double TauFloor(const Curve& curve) {
  return std::max(kTauLowShare * curve.XSpan(), MinResolvableTau(curve));
}

Window Select(const Curve& curve, double from_share, double to_share) {
  const double lo = curve.x_min + from_share * curve.XSpan();
  const double hi = curve.x_min + to_share * curve.XSpan();
  std::vector<int> rows;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    if (curve.x[i] >= lo && curve.x[i] <= hi) rows.push_back(i);
  }
  Window window;
  window.x.resize(rows.size());
  window.y.resize(rows.size());
  window.w.resize(rows.size());
  for (size_t k = 0; k < rows.size(); ++k) {
    window.x[k] = curve.x[rows[k]];
    window.y[k] = curve.y[rows[k]];
    window.w[k] = curve.weight[rows[k]];
  }
  return window;
}

void GuessExpDecay(const Curve& curve, CandidateSet* set) {
  const double span = curve.XSpan();
  const double tail = TailMean(curve, kTailShare);
  const double head = HeadMean(curve, kTailShare);
  const double sign = head >= tail ? 1.0 : -1.0;
  // Log-linearisation of the distance from the tail level.
  const Eigen::VectorXd lifted = sign * (curve.y.array() - tail).matrix();
  const signal::LinearisedFit log_fit = signal::FitLogLinear(curve.x, lifted);
  if (log_fit.IsOk() && log_fit.slope < 0) {
    Eigen::Vector3d p(sign * log_fit.Prefactor(), -1.0 / log_fit.slope, tail);
    set->Add("loglinear", p);
  }
  signal::MatrixPencilOptions pencil_options;
  pencil_options.fit_offset = true;
  pencil_options.max_samples = kPencilSamples;
  const signal::ExponentialSum pencil = signal::FitExponentialSum(curve.x, curve.y, pencil_options);
  if (pencil.IsOk() && !pencil.terms.empty()) {
    set->Add("pencil",
             Eigen::Vector3d(pencil.terms[0].amplitude, 1.0 / pencil.terms[0].rate, pencil.offset));
  }
  const Curve sub = Subsample(curve, kProfilePoints);
  ExpProfile profile;
  if (ProfileExponential(sub.x, sub.y, sub.weight, true, TauFloor(curve), kTauHighShare * span,
                         &profile)) {
    set->Add("profile", Eigen::Vector3d(profile.amplitude, profile.tau, profile.offset));
  }
  set->SetScale(0, std::max(curve.YSpan(), std::abs(head - tail)), false);
  set->SetScale(1, span / 3, true);
  set->SetScale(2, std::max(std::abs(tail), curve.YSpan()), false);
}

void GuessBiexpDecay(const Curve& curve, CandidateSet* set) {
  const double span = curve.XSpan();
  signal::MatrixPencilOptions pencil_options;
  pencil_options.num_exponentials = 2;
  pencil_options.fit_offset = true;
  pencil_options.max_samples = kPencilSamples;
  const signal::ExponentialSum pencil = signal::FitExponentialSum(curve.x, curve.y, pencil_options);
  if (pencil.IsOk() && pencil.terms.size() == 2) {
    Eigen::VectorXd p(5);
    p << pencil.terms[1].amplitude, 1.0 / pencil.terms[1].rate, pencil.terms[0].amplitude,
        1.0 / pencil.terms[0].rate, pencil.offset;
    // Lifetimes far beyond the span make a straight line that trades against the baseline
    // with huge opposite amplitudes: not a start worth offering.
    if (std::max(p[1], p[3]) <= kTauHighShare * span) set->Add("pencil", p);
  }
  // Split: the late window holds the slow component and the baseline; the early window's
  // remainder is the fast component.
  const Curve sub = Subsample(curve, kProfilePoints);
  const Window late = Select(sub, kLateStart, 1.0);
  ExpProfile slow;
  if (late.x.size() >= 4 && ProfileExponential(late.x, late.y, late.w, true, TauFloor(curve),
                                               kTauHighShare * span, &slow)) {
    const Window early = Select(sub, 0.0, kEarlyEnd);
    Eigen::VectorXd remainder =
        early.y.array() - slow.amplitude * (-early.x.array() / slow.tau).exp() - slow.offset;
    ExpProfile fast;
    if (early.x.size() >= 3 &&
        ProfileExponential(early.x, remainder, early.w, false, TauFloor(curve), slow.tau, &fast)) {
      Eigen::VectorXd p(5);
      p << fast.amplitude, fast.tau, slow.amplitude, slow.tau, slow.offset;
      set->Add("split", p);
    }
  }
  // Profile over (tau1 < tau2) with both amplitudes and the baseline solved linearly.
  std::vector<Eigen::VectorXd> starts;
  const std::vector<double> taus = Spaced(3 * TauFloor(curve), 3 * span, 14, true);
  for (size_t a = 0; a < taus.size(); ++a) {
    for (size_t b = a + 2; b < taus.size(); ++b) {
      Eigen::VectorXd p(5);
      p << 1.0, taus[a], 1.0, taus[b], 0.0;
      starts.push_back(p);
    }
  }
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, starts, &best)) set->Add("profile", best);
  // Pattern search of both lifetimes (in log) from the best candidate so far, on the
  // profile's subsample: the polish places the start in the valley, the fit finishes it.
  if (set->Best(&best)) {
    PolishProfile(*set, sub, {1, 3}, {0.3, 0.3}, {true, true}, kPolishEvaluations, &best,
                  TauFloor(curve));
    set->Add("polished", best);
  }
  set->SetScale(0, curve.YSpan(), false);
  set->SetScale(1, span / 10, true);
  set->SetScale(2, curve.YSpan(), false);
  set->SetScale(3, span / 2, true);
  set->SetScale(4, std::max(std::abs(TailMean(curve, kTailShare)), curve.YSpan()), false);
}

void GuessStretchedExp(const Curve& curve, CandidateSet* set) {
  const double span = curve.XSpan();
  const double tail = TailMean(curve, kTailShare);
  const double head = HeadMean(curve, 0.02);
  const double amplitude = head - tail;
  // ln(-ln((y - b) / A)) = beta ln x - beta ln tau on points where the ratio is in (0, 1).
  std::vector<double> u, v;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    const double ratio = (curve.y[i] - tail) / amplitude;
    if (curve.x[i] > 0 && ratio > 0.05 && ratio < 0.95) {
      u.push_back(std::log(curve.x[i]));
      v.push_back(std::log(-std::log(ratio)));
    }
  }
  if (u.size() >= 3) {
    const signal::LineFit line = signal::FitLine(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                                                 Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
    if (line.IsOk() && line.slope > 0) {
      const double beta = line.slope;
      set->Add("loglinear",
               Eigen::Vector4d(amplitude, std::exp(-line.intercept / beta), beta, tail));
    }
  }
  const Curve sub = Subsample(curve, kProfilePoints);
  const std::vector<double> taus = Spaced(3 * TauFloor(curve), 10 * span, 20, true);
  std::vector<Eigen::VectorXd> all;
  for (double beta : {0.3, 0.5, 0.7, 1.0, 1.4, 2.0}) {
    std::vector<Eigen::VectorXd> starts;
    for (double tau : taus) starts.push_back(Eigen::Vector4d(amplitude, tau, beta, tail));
    all.insert(all.end(), starts.begin(), starts.end());
    Eigen::VectorXd best;
    if (beta == 1.0 && BestOnCurve(*set, sub, starts, &best)) set->Add("beta1", best);
  }
  Eigen::VectorXd best;
  if (BestOnCurve(*set, sub, all, &best)) set->Add("profile", best);
  if (set->Best(&best)) {
    PolishProfile(*set, sub, {1, 2}, {0.3, 0.2}, {true, true}, kPolishEvaluations, &best);
    set->Add("polished", best);
  }
  set->SetScale(0, curve.YSpan(), false);
  set->SetScale(1, span / 3, true);
  set->SetScale(2, 1.0, true);
  set->SetScale(3, std::max(std::abs(tail), curve.YSpan()), false);
}

}  // namespace

bool GuessDecayFamily(const GuessContext& context, std::string* error) {
  const Curve& curve = *context.curve;
  CandidateSet& set = *context.set;
  const std::string& name = context.request->name;
  if (name == "stretched_exp" && curve.x_min < 0) {
    int negative = 0;
    for (int i = 0; i < curve.NumPoints(); ++i) negative += curve.x[i] < 0;
    if (error != nullptr) {
      *error = "stretched_exp needs x >= 0: " + std::to_string(negative) + " of " +
               std::to_string(curve.NumPoints()) + " distinct x are < 0";
    }
    return false;
  }
  if (curve.IsConstant()) {
    set.Warn("constant response: amplitudes guessed as 0, the baseline as the constant");
    Eigen::VectorXd p = Eigen::VectorXd::Zero(set.NumParameters());
    p[set.NumParameters() - 1] = curve.y_min;
    if (name == "biexp_decay") {
      p[1] = curve.XSpan() / 10;
      p[3] = curve.XSpan();
    } else {
      p[1] = curve.XSpan() / 3;
      if (name == "stretched_exp") p[2] = 1.0;
    }
    set.Add("flat", p, false);
    return true;
  }
  if (name == "exp_decay") GuessExpDecay(curve, &set);
  if (name == "biexp_decay") GuessBiexpDecay(curve, &set);
  if (name == "stretched_exp") GuessStretchedExp(curve, &set);
  return true;
}

}  // namespace guess
}  // namespace foothold
