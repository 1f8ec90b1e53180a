// Robust losses against gross outliers, through RunLocalFit: a 20-point line with two gross
// outliers and a 20-point gaussian peak with one. Every robust loss must land within
// kStandardErrors standard errors of the least-squares fit to the same data without the
// outliers, where plain least squares on the contaminated data does not, and must flag exactly
// the outliers. The least-absolute-deviations line is checked against a worked example.

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "engine/loss/robust_loss.h"
#include "engine/loss/robust_reweighting.h"
#include "engine/model/families/families.h"
#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"
#include "tests/certification/certification_support.h"

namespace foothold {
namespace {

// The acceptance criterion: robust estimates within this many clean-fit standard errors.
constexpr double kStandardErrors = 2.0;
// The robust (M-estimator) standard errors on the contaminated data stay within this factor of the
// clean least-squares ones: the reported covariance describes the clean points.
constexpr double kStandardErrorFactor = 2.0;
constexpr int kNumPoints = 20;
const LossKind kRobustLosses[] = {LossKind::kSoftL1, LossKind::kHuber, LossKind::kCauchy,
                                  LossKind::kTukey, LossKind::kL1};

struct Case {
  std::string name;
  std::unique_ptr<Model> model;
  Eigen::VectorXd truth;
  Eigen::VectorXd start;
  double x0 = 0, x1 = 1, noise = 0;
  std::vector<int> outliers;
  std::vector<double> shifts;
};

Dataset MakeData(const Case& c, bool with_outliers) {
  Dataset data;
  data.predictor_names = {"x"};
  data.predictors.resize(kNumPoints, 1);
  for (int i = 0; i < kNumPoints; ++i) {
    data.predictors(i, 0) = c.x0 + (c.x1 - c.x0) * i / (kNumPoints - 1);
  }
  data.response.resize(kNumPoints);
  c.model->Evaluate(data.predictors, c.truth.data(), data.response.data());
  certification::SeededNormal normal(20261202);
  for (int i = 0; i < kNumPoints; ++i) data.response[i] += c.noise * normal.Normal();
  if (with_outliers) {
    for (size_t k = 0; k < c.outliers.size(); ++k) data.response[c.outliers[k]] += c.shifts[k];
  }
  return data;
}

std::vector<Case> Cases() {
  std::vector<Case> cases;
  Case line;
  line.name = "line, two outliers";
  line.model = std::make_unique<LineModel>();
  line.truth = Eigen::Vector2d(2.0, 1.0);  // slope, intercept
  line.start = Eigen::Vector2d(1.0, 0.0);
  line.x0 = 0;
  line.x1 = 10;
  line.noise = 0.2;
  line.outliers = {4, 15};
  line.shifts = {6.0, -5.0};
  cases.push_back(std::move(line));
  Case peak;
  peak.name = "gaussian, one outlier";
  peak.model = std::make_unique<GaussianModel>();
  peak.truth = Eigen::Vector4d(5.0, 0.3, 1.0, 0.5);  // height, center, sigma, baseline
  peak.start = Eigen::Vector4d(4.0, 0.0, 1.3, 0.3);
  peak.x0 = -4;
  peak.x1 = 4;
  peak.noise = 0.05;
  peak.outliers = {11};
  peak.shifts = {3.0};
  cases.push_back(std::move(peak));
  return cases;
}

TEST_CASE("Robust losses: recover line and peak parameters despite gross outliers", "[engine]") {
  for (const Case& c : Cases()) {
    Problem clean;
    clean.model = c.model.get();
    clean.data = MakeData(c, false);
    Problem dirty = clean;
    dirty.data = MakeData(c, true);
    LocalFitOptions least_squares;
    const LocalFitSummary clean_fit = RunLocalFit(clean, c.start, least_squares);
    REQUIRE(clean_fit.IsConverged());
    const FitStatistics clean_stats = ComputeFitStatistics(clean, clean_fit.parameters);
    const Eigen::VectorXd& se = clean_stats.standard_errors;

    // Plain least squares on the contaminated data misses by more than kStandardErrors.
    const LocalFitSummary plain = RunLocalFit(dirty, c.start, least_squares);
    const double plain_miss =
        ((plain.parameters - clean_fit.parameters).cwiseQuotient(se)).cwiseAbs().maxCoeff();
    INFO(c.name << ": least squares misses by " << plain_miss << " standard errors");
    CHECK(plain_miss > kStandardErrors);

    for (LossKind loss : kRobustLosses) {
      LocalFitOptions options;
      options.loss = loss;
      const LocalFitSummary robust = RunLocalFit(dirty, c.start, options);
      INFO(c.name << ", " << ToString(loss) << ": " << robust.message);
      CHECK(robust.IsConverged());
      const double miss =
          ((robust.parameters - clean_fit.parameters).cwiseQuotient(se)).cwiseAbs().maxCoeff();
      INFO("misses the clean fit by " << miss << " standard errors");
      CHECK(miss <= kStandardErrors);

      RobustAssessment assessment;
      REQUIRE(AssessRobustFit(dirty, robust.parameters, loss, 0, &assessment));
      CHECK(assessment.outliers == c.outliers);
      CHECK(assessment.cost == Approx(robust.final_cost).epsilon(1e-12));

      const FitStatistics stats = ComputeRobustStatistics(dirty, robust.parameters, assessment);
      REQUIRE(stats.has_standard_errors);
      for (int j = 0; j < se.size(); ++j) {
        INFO("parameter " << j << ": robust se " << stats.standard_errors[j] << ", clean se "
                          << se[j]);
        CHECK(stats.standard_errors[j] <= kStandardErrorFactor * se[j]);
        CHECK(stats.standard_errors[j] >= se[j] / kStandardErrorFactor);
      }
    }
  }
}

// Worked by hand. Points (x, y): (0,1) (1,2) (2,2) (3,5) (4,4). An L1 line through n = 5
// points can be taken through two of them (an optimum of the linear programme lies at a vertex:
// as many zero residuals as parameters). Of the ten lines through pairs, the one through (0,1)
// and (4,4), y = 1 + 0.75 x, has residuals y - fit = 0, 0.25, -0.5, 1.75, 0 and sum 2.5; the
// next best, through (1,2) and (4,4), has sum 8/3. Optimality by the subgradient condition:
// 0 must lie in  -sum_{r_k != 0} sign(r_k) (x_k, 1) - sum_{r_k = 0} u_k (x_k, 1), |u_k| <= 1.
// The nonzero residuals give signs +, -, + at x = 1, 2, 3: sum (1 - 2 + 3, 1 - 1 + 1) = (2, 1).
// Then u_0 (0, 1) + u_4 (4, 1) = -(2, 1) gives u_4 = -1/2 and u_0 = -1/2, both strictly inside
// [-1, 1], so the line is optimal and (the u strictly inside) the unique optimum.
TEST_CASE("Robust losses: the L1 line through five points matches the worked example", "[engine]") {
  LineModel model;
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors.resize(5, 1);
  problem.data.predictors << 0, 1, 2, 3, 4;
  problem.data.response.resize(5);
  problem.data.response << 1, 2, 2, 5, 4;
  constexpr double kL1Tolerance = 1e-6;  // IRLS with the floor kL1Floor on |z|
  for (LocalMethod method :
       {LocalMethod::kLevenbergMarquardt, LocalMethod::kGaussNewton, LocalMethod::kBfgs}) {
    LocalFitOptions options;
    options.loss = LossKind::kL1;
    options.method = method;
    const LocalFitSummary fit = RunLocalFit(problem, Eigen::Vector2d(0, 0), options);
    INFO(ToString(method) << ": " << fit.message);
    CHECK(fit.IsConverged());
    CHECK(std::abs(fit.parameters[0] - 0.75) <= kL1Tolerance);  // slope
    CHECK(std::abs(fit.parameters[1] - 1.0) <= kL1Tolerance);   // intercept
    RobustAssessment assessment;
    REQUIRE(AssessRobustFit(problem, fit.parameters, LossKind::kL1, 0, &assessment));
    // The cost is 2 s^2 sum |z| = 2 s sum |r|: recover sum |r| = 2.5.
    CHECK(assessment.cost / (2 * assessment.scale) == Approx(2.5).epsilon(1e-6));
  }
}

}  // namespace
}  // namespace foothold
