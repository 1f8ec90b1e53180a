#pragma once
// Shared machinery of the family guessers: the prepared curve every guesser reads, and the
// candidate set that clamps, refines, scores and ranks the starts a guesser proposes.

#include <Eigen/Core>
#include <limits>
#include <string>
#include <vector>

#include "engine/model/dataset.h"
#include "engine/model/model.h"
#include "heuristics/guess.h"

namespace foothold {
namespace guess {

// The data as the guessers see them: sorted by x, duplicate x merged, and for long series
// averaged into at most kMaxCurvePoints bins (guesses need the shape, not every point; the
// candidates are still scored on the full data).
struct Curve {
  Eigen::VectorXd x;       // strictly increasing
  Eigen::VectorXd y;       // merged (and binned) response
  Eigen::VectorXd weight;  // 1 / sigma^2 when sigma is given, else 1
  double x_min = 0;
  double x_max = 0;
  double y_min = 0;
  double y_max = 0;
  int num_input_points = 0;

  int NumPoints() const { return static_cast<int>(x.size()); }
  double XSpan() const { return x_max - x_min; }
  double YSpan() const { return y_max - y_min; }
  bool IsConstant() const { return !(y_max > y_min); }
};

// Most points a guesser looks at; longer series are averaged in bins of equal count.
constexpr int kMaxCurvePoints = 500;

// Weighted least squares for a few well-scaled columns, as the profiles need thousands of
// them: columns scaled to unit norm, normal equations by LDLT (adequate for starting
// guesses, not for final answers). Returns the weighted rss, +inf when singular or not
// finite; coefficients in the unscaled columns.
double SolveSmallLeastSquares(const Eigen::MatrixXd& design, const Eigen::VectorXd& y,
                              const Eigen::VectorXd& weight, Eigen::VectorXd* coefficients);

// Sorts, merges and bins data's "x" column and response. False with a message when x or
// the response is unusable (fewer than min_points distinct x, x all equal).
bool PrepareCurve(const Dataset& data, const std::string& family, int min_points, Curve* curve,
                  std::string* error);

// Every `stride`-th point of the curve (at most max_points of them), for cheap profiling.
Curve Subsample(const Curve& curve, int max_points);

// The q-quantile (0..1) of values, by linear interpolation between order statistics.
double Quantile(Eigen::VectorXd values, double q);
// Mean of the first (or last) share of the curve's y.
double HeadMean(const Curve& curve, double share);
double TailMean(const Curve& curve, double share);
// Linear interpolation of (x, y) at t (x increasing); clamps outside.
double Interpolate(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double t);
// n values spaced evenly in log between lo and hi (both > 0), or evenly when !log.
std::vector<double> Spaced(double lo, double hi, int n, bool log);

// Collects candidates for one model and dataset, then ranks them into a GuessResult.
class CandidateSet {
 public:
  // `linear` lists the parameters the model is linear in: after a candidate is proposed
  // they are re-solved by weighted linear least squares for its nonlinear ones (the
  // Jacobian columns of linear parameters are their basis functions).
  CandidateSet(const Model& model, const Dataset& data, const Eigen::VectorXd& lower,
               const Eigen::VectorXd& upper, std::vector<int> linear);

  int NumParameters() const { return num_parameters_; }
  const Model& GetModel() const { return model_; }
  // The prepared curve on which Add solves the linear parameters (the full data when
  // unset); candidates are always scored on the full data.
  void SetCurve(const Curve* curve) { curve_ = curve; }
  // The full data the candidates are scored on (x in input order, not binned).
  const Eigen::MatrixXd& DataX() const { return x_; }
  const Eigen::VectorXd& DataY() const { return y_; }
  const Eigen::VectorXd& DataWeight() const { return weight_; }
  const Eigen::VectorXd& Lower() const { return lower_; }
  const Eigen::VectorXd& Upper() const { return upper_; }

  // Proposes a start. Non-finite values drop it (counted); values outside the bounds are
  // moved inside (with a warning). Returns the rss of what was kept, or +inf.
  double Add(const std::string& name, Eigen::VectorXd parameters, bool refine_linear = true);
  // Weighted rss of `parameters` on the full data (+inf when the model is not finite).
  double Rss(const Eigen::VectorXd& parameters) const;
  // Solves the linear parameters for the nonlinear ones in `parameters` on `curve` (or on
  // the full data when curve is null) and returns the rss there; +inf on failure.
  double RefineLinear(Eigen::VectorXd* parameters, const Curve* curve) const;

  // The lowest-rss candidate so far (false when there is none).
  bool Best(Eigen::VectorXd* parameters) const;

  // Typical magnitude and sampling hint of parameter j (defaults: |best value|, linear).
  void SetScale(int j, double scale, bool log_scale);
  void Warn(const std::string& warning);

  // Ranks by rss, keeps the best max_candidates with distinct names, fills scales. False
  // when no candidate survived.
  bool Finish(const std::string& family, const GuessOptions& options, GuessResult* out,
              std::string* error);

 private:
  double Clamp(int j, double value) const;
  double CurveRss(const Eigen::VectorXd& parameters, const Eigen::MatrixXd& x,
                  const Eigen::VectorXd& y, const Eigen::VectorXd& weight) const;
  double SolveLinear(Eigen::VectorXd* parameters, const Eigen::MatrixXd& x,
                     const Eigen::VectorXd& y, const Eigen::VectorXd& weight) const;

  const Model& model_;
  const Curve* curve_ = nullptr;
  int num_parameters_ = 0;
  Eigen::MatrixXd x_;  // n x 1, the data's "x"
  Eigen::VectorXd y_;
  Eigen::VectorXd weight_;
  Eigen::VectorXd lower_;
  Eigen::VectorXd upper_;
  std::vector<int> linear_;
  std::vector<GuessCandidate> candidates_;
  Eigen::VectorXd scale_;
  std::vector<bool> log_scale_;
  std::vector<bool> has_scale_;
  std::vector<std::string> warnings_;
  int num_dropped_ = 0;
  int num_clamped_ = 0;
};

// Effective bounds: the family defaults intersected with the request's (size p or empty).
// False when they do not overlap, naming the parameter.
bool IntersectBounds(const Model& model, const FamilyInstance& instance,
                     const Eigen::VectorXd& request_lower, const Eigen::VectorXd& request_upper,
                     Eigen::VectorXd* lower, Eigen::VectorXd* upper, std::string* error);

}  // namespace guess
}  // namespace foothold
