// Robust losses and local methods through the fit service and the result document: a line
// with two gross outliers fitted with each loss and method, the outliers reported by index.

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "server/fit_service.h"
#include "server/json_codec.h"

namespace foothold {
namespace {

// y = 2x + 1 on x = 0..19 with a deterministic wiggle of +-0.1 and gross outliers at 3 and 12.
const std::vector<int> kOutliers = {3, 12};

FitRequest LineRequest() {
  std::vector<double> x, y;
  for (int i = 0; i < 20; ++i) {
    x.push_back(i);
    y.push_back(2.0 * i + 1.0 + 0.1 * std::sin(5.1 * i * i));
  }
  y[3] += 15;
  y[12] -= 12;
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", x, &error));
  REQUIRE(request.data.AddColumn("y", y, &error));
  request.model.family = "line";
  request.start = {{"slope", 1}, {"intercept", 0}};
  request.loss_scale = 0;  // automatic
  return request;
}

FitOutcome Fit(const FitRequest& request) {
  FitOutcome outcome;
  std::string error;
  const bool ok = RunFit(request, &outcome, &error);
  INFO(error);
  REQUIRE(ok);
  return outcome;
}

TEST_CASE("RobustFit: every loss and method recovers the line and reports the outliers",
          "[server]") {
  // The clean line is known: slope 2 and intercept 1 within the wiggle's effect (measured
  // least squares on the clean points: within 0.01 and 0.06); least squares on the
  // contaminated data is pulled by more than kPulled in the intercept.
  constexpr double kSlopeTolerance = 0.02;
  constexpr double kInterceptTolerance = 0.2;
  FitRequest request = LineRequest();
  const FitOutcome plain = Fit(request);
  CHECK(std::abs(plain.best.parameters[1] - 1.0) > kInterceptTolerance);
  CHECK(plain.outliers.empty());
  CHECK(EncodeFitOutcome(plain)["best"]["loss"] == "squared");

  for (const char* loss : {"soft_l1", "huber", "cauchy", "tukey", "l1"}) {
    for (const char* method : {"lm", "gauss_newton", "bfgs"}) {
      request.loss = loss;
      request.method = method;
      std::string error;
      REQUIRE(request.Validate(&error));
      const FitOutcome outcome = Fit(request);
      INFO(loss << ", " << method << ": " << outcome.best.message);
      CHECK(outcome.IsConverged());
      CHECK(std::abs(outcome.best.parameters[0] - 2.0) < kSlopeTolerance);
      CHECK(std::abs(outcome.best.parameters[1] - 1.0) < kInterceptTolerance);
      CHECK(outcome.outliers == kOutliers);
      CHECK(outcome.statistics.has_standard_errors);
      const auto document = EncodeFitOutcome(outcome);
      CHECK(document["best"]["loss"] == loss);
      CHECK(document["best"]["method"] == method);
      CHECK(document["best"]["loss_scale"].get<double>() > 0);
      CHECK(document["best"]["loss_scale_automatic"] == true);
      CHECK(document["outliers"]["count"] == 2);
      CHECK(document["outliers"]["indices"] == std::vector<int>(kOutliers));
      // Every start's message names the method that ran it.
      const std::string prefix =
          std::string(method) == "bfgs"
              ? "bfgs: "
              : (std::string(method) == "gauss_newton" ? "gauss-newton: " : "");
      for (const StartRecord& start : outcome.starts) {
        if (!prefix.empty()) CHECK(start.message.rfind(prefix, 0) == 0);
        CHECK(start.message.find(std::string(loss) + " loss by") != std::string::npos);
      }
    }
  }
}

TEST_CASE("RobustFit: a requested scale is used and unknown choices are rejected", "[server]") {
  FitRequest request = LineRequest();
  request.loss = "huber";
  request.loss_scale = 0.5;
  const FitOutcome outcome = Fit(request);
  CHECK(outcome.loss_scale == 0.5);
  CHECK_FALSE(outcome.is_loss_scale_automatic);
  CHECK(outcome.outliers == kOutliers);
  std::string error;
  request.method = "simplex";
  CHECK_FALSE(request.Validate(&error));
  CHECK(error == "method = 'simplex': expected one of lm, gauss_newton, bfgs");
  request.method = "lm";
  request.loss_scale = std::nan("");
  CHECK_FALSE(request.Validate(&error));
  CHECK(error.rfind("loss_scale = ", 0) == 0);
}

}  // namespace
}  // namespace foothold
