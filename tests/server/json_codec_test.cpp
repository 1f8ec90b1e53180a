// The codec: request documents decode with field-naming errors; outcomes encode to the
// result document with every required key and null for non-finite numbers.
#include "server/json_codec.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "server/fit_service.h"

using foothold::DecodeFitRequestText;
using foothold::EncodeFitOutcome;
using foothold::EncodeFitRequest;
using foothold::FitOutcome;
using foothold::FitRequest;
using foothold::Json;

namespace {

std::string DecodeError(const std::string& text) {
  FitRequest request;
  std::string error;
  if (DecodeFitRequestText(text, &request, &error)) return "decoded";
  return error;
}

constexpr const char* kGaussianRequest = R"({
  "label": "wafer-17/pl-map",
  "model": {"family": "gaussian"},
  "data": {"x": [0, 1, 2, 3, 4, 5, 6, 7, 8],
           "y": [1.02, 1.31, 3.2, 7.1, 10.4, 7.0, 3.3, 1.29, 1.01]},
  "start": {"height": 8, "center": 4.2, "sigma": 1.5, "baseline": 0.8},
  "bounds": {"sigma": [0, null]},
  "seed": 7
})";

}  // namespace

TEST_CASE("JsonCodec: a request document decodes into a FitRequest", "[server]") {
  FitRequest request;
  std::string error;
  REQUIRE(DecodeFitRequestText(kGaussianRequest, &request, &error));
  CHECK(request.label == "wafer-17/pl-map");
  CHECK(request.model.family == "gaussian");
  CHECK(request.data.NumRows() == 9);
  CHECK(request.data.ColumnNames() == std::vector<std::string>{"x", "y"});
  REQUIRE(request.start.size() == 4);
  CHECK(request.start[1].name == "center");
  CHECK(request.start[1].value == 4.2);
  REQUIRE(request.bounds.size() == 1);
  CHECK(request.bounds[0].lower == 0);
  CHECK(request.bounds[0].upper == std::numeric_limits<double>::infinity());
  CHECK(request.seed == 7u);
  CHECK(request.Validate(&error));
}

TEST_CASE("JsonCodec: decoding errors name the field and index", "[server]") {
  CHECK(DecodeError(R"({"data": {"x": [1, 2, 3, 4], "y": [1, 2, 3, "NaN"]}})") ==
        "data.y[3]: expected a finite number, got \"NaN\"");
  CHECK(DecodeError(R"({"bounds": {"center": [5, 2]}})") == "bounds.center: lower 5 > upper 2");
  CHECK(DecodeError(R"({"bounds": {"center": [5]}})") ==
        "bounds.center: expected [lower, upper], got [5]");
  CHECK(DecodeError(R"({"bounds": {"center": [0, "big"]}})") ==
        "bounds.center[1]: expected a number, null or \"inf\"/\"-inf\", got \"big\"");
  CHECK(DecodeError(R"({"start": {"height": "tall"}})") ==
        "start.height: expected a finite number, got \"tall\"");
  CHECK(DecodeError(R"({"data": {"x": [1, 2], "y": [1]}})") ==
        "data: column 'y' has 1 values but column 'x' has 2");
  CHECK(DecodeError(R"({"data": {"x": 3}})") == "data.x: expected an array of numbers, got 3");
  CHECK(DecodeError(R"({"model": {"family": "line", "colour": 1}})") ==
        "model.colour: unknown field (expected family, degree, peaks, expression, parameters)");
  CHECK(DecodeError(R"({"model": {"family": "multi_gaussian", "peaks": 0}})") ==
        "model.peaks = 0: must be >= 1");
  CHECK(DecodeError(R"({"starts": 2.5})") == "starts: expected an integer, got 2.5");
  CHECK(DecodeError(R"({"satrt": {}})").find("satrt: unknown field") == 0);
  CHECK(DecodeError(R"([1, 2])") == "request: expected an object with model and data, got [1,2]");
  CHECK(DecodeError("{\"model\": ").find("request: invalid JSON: parse error at line 1") == 0);
  CHECK(DecodeError(R"({"data": {"x": [1e400]}})").find("request: invalid JSON: number overflow") ==
        0);
}

TEST_CASE("JsonCodec: fields for later work decode but fail validation", "[server]") {
  FitRequest request;
  std::string error;
  REQUIRE(DecodeFitRequestText(kGaussianRequest, &request, &error));
  request.loss = "cauchy";
  CHECK(request.Validate(&error));
  request.loss = "quartic";
  CHECK_FALSE(request.Validate(&error));
  CHECK(error == "loss = 'quartic': expected one of squared, soft_l1, huber, cauchy, tukey, l1");
  request.loss = "squared";
  request.method = "bfgs";
  CHECK(request.Validate(&error));
  request.method = "newton";
  CHECK_FALSE(request.Validate(&error));
  CHECK(error.rfind("method = 'newton': expected one of ", 0) == 0);
  request.method = "lm";
  request.starts = 64;
  CHECK(request.Validate(&error));
  request.starts = foothold::kMaxStarts + 1;
  CHECK_FALSE(request.Validate(&error));
  CHECK(error.find("starts = 100001: must be between 1 and 100000") == 0);
}

TEST_CASE("JsonCodec: the result document has every key of DESIGN 3a", "[server]") {
  FitRequest request;
  std::string error;
  REQUIRE(DecodeFitRequestText(kGaussianRequest, &request, &error));
  FitOutcome outcome;
  REQUIRE(foothold::RunFit(request, &outcome, &error));
  const Json document = EncodeFitOutcome(outcome);
  for (const char* key : {"model", "best", "basins", "starts", "verdict", "seed", "elapsed_ms"}) {
    INFO(key);
    CHECK(document.contains(key));
  }
  CHECK(document["model"]["family"] == "gaussian");
  const Json& best = document["best"];
  for (const char* key : {"parameters", "rss", "dof", "reduced_chi2", "r2", "aic", "bic",
                          "termination", "iterations", "evaluations"}) {
    INFO(key);
    CHECK(best.contains(key));
  }
  for (const char* name : {"height", "center", "sigma", "baseline"}) {
    INFO(name);
    const Json& parameter = best["parameters"][name];
    for (const char* key : {"value", "stderr", "ci_low", "ci_high", "at_bound"}) {
      INFO(key);
      CHECK(parameter.contains(key));
    }
  }
  CHECK(best["dof"] == 5);
  CHECK(best["parameters"]["center"]["value"].get<double>() == Approx(4.0).margin(0.05));
  // Multistart: the user's start first, then the guesses and quasi-random starts.
  REQUIRE(document["basins"].size() >= 1);
  CHECK(document["basins"][0]["id"] == 0);
  CHECK(document["basins"][0]["delta_rss"] == 0.0);
  CHECK(document["basins"][0]["starts"].get<int>() >= 1);
  REQUIRE(document["starts"].size() > 1);
  CHECK(document["search"]["starts_run"] == document["starts"].size());
  // A clean peak: no start was cut off below the best basin.
  CHECK(document["search"]["runaway_starts"] == 0);
  CHECK(document["search"]["runaway_rss"].is_null());
  CHECK(document["search"]["runaway_parameters"] == Json::array());
  const Json& start = document["starts"][0];
  for (const char* key : {"index", "origin", "start", "end", "rss", "termination", "iterations",
                          "converged", "basin"}) {
    INFO(key);
    CHECK(start.contains(key));
  }
  CHECK(start["origin"] == "user");
  CHECK(start["start"]["height"] == 8.0);
  CHECK(document["verdict"]["flags"].is_array());
  CHECK_FALSE(document["verdict"]["summary"].get<std::string>().empty());
  CHECK(document["seed"] == 7);
  // The dump parses back: the document is valid JSON.
  CHECK(Json::parse(document.dump()) == document);
}

TEST_CASE("JsonCodec: non-finite numbers become null", "[server]") {
  FitOutcome outcome;
  outcome.model.family = "line";
  outcome.parameter_names = {"slope", "intercept"};
  outcome.is_fixed = {false, false};
  outcome.best.parameters = Eigen::Vector2d(1.0, std::nan(""));
  outcome.statistics.rss = std::numeric_limits<double>::infinity();
  outcome.statistics.reduced_chi2 = std::nan("");
  outcome.statistics.standard_errors = Eigen::Vector2d(std::nan(""), 0.5);
  const Json document = EncodeFitOutcome(outcome);
  CHECK(document["best"]["rss"].is_null());
  CHECK(document["best"]["reduced_chi2"].is_null());
  CHECK(document["best"]["parameters"]["intercept"]["value"].is_null());
  CHECK(document["best"]["parameters"]["slope"]["stderr"].is_null());
  CHECK(document["best"]["parameters"]["slope"]["value"] == 1.0);
  CHECK(document.dump().find("nan") == std::string::npos);
}

TEST_CASE("JsonCodec: a request survives encoding and decoding", "[server]") {
  FitRequest request;
  std::string error;
  REQUIRE(DecodeFitRequestText(kGaussianRequest, &request, &error));
  const Json encoded = EncodeFitRequest(request);
  FitRequest again;
  REQUIRE(foothold::DecodeFitRequest(encoded, &again, &error));
  CHECK(EncodeFitRequest(again) == encoded);
  CHECK(again.bounds[0].upper == std::numeric_limits<double>::infinity());
  CHECK(again.data.Column(1) == request.data.Column(1));
}
