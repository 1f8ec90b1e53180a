// The daemon's admission check (ValidateFitRequestForAdmission): the same refusals, with the
// same messages, as PrepareFit for everything a client can get wrong, at a cost linear in the
// data — no guesser, no fit — and what only a guesser can find left to the job.
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <functional>
#include <string>
#include <vector>

#include "server/fit_service.h"

using foothold::FitRequest;
using foothold::PreparedFit;

namespace {

// Admission of 100 000 points must stay well under what the generic guesser alone costs on
// them (about 30 s measured on the shared two-core machine before admission skipped it).
constexpr double kMaxAdmissionSeconds = 3.0;
constexpr int kLargePoints = 100000;

FitRequest PeakRequest(int num_points) {
  std::vector<double> x;
  std::vector<double> y;
  for (int i = 0; i < num_points; ++i) {
    x.push_back(20.0 * i / (num_points - 1));
    y.push_back(10.0 * std::exp(-(x.back() - 10) * (x.back() - 10) / (2 * 1.5 * 1.5)) + 1 +
                0.05 * std::sin(7.3 * i * i));
  }
  FitRequest request;
  std::string error;
  REQUIRE(request.data.AddColumn("x", x, &error));
  REQUIRE(request.data.AddColumn("y", y, &error));
  request.model.family = "gaussian";
  return request;
}

FitRequest ExpressionRequest(int num_points) {
  FitRequest request = PeakRequest(num_points);
  request.model.family.clear();
  request.model.expression = "h*exp(-(x-m)^2/(2*s^2))+b";
  request.model.parameters = {"h", "m", "s", "b"};
  return request;
}

// One way to spoil a request, and a part of the message both checks must give.
struct Spoiled {
  std::function<void(FitRequest*)> spoil;
  std::string message_part;
};

double SecondsOf(const std::function<void()>& work) {
  const auto started = std::chrono::steady_clock::now();
  work();
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
}

}  // namespace

TEST_CASE("Admission: refuses what PrepareFit refuses, with the same message", "[server]") {
  const std::vector<Spoiled> cases = {
      {[](FitRequest* r) { r->model.family = "nonesuch"; }, "model.family: unknown family"},
      {[](FitRequest* r) { r->model.degree = 2; }, "model.degree: family 'gaussian' takes no"},
      {[](FitRequest* r) { r->model.auto_peaks = true; }, "model.peaks: family 'gaussian'"},
      {[](FitRequest* r) {
         r->model.family.clear();
         r->model.expression = "a*x+";
       },
       "model.expression"},
      {[](FitRequest* r) {
         r->model.family.clear();
         r->model.expression = "a*q";
         r->model.parameters = {"a"};
       },
       ""},
      {[](FitRequest* r) { r->response = "z"; }, "response: the data have no column 'z'"},
      {[](FitRequest* r) { r->response = "log(y"; }, "response"},
      {[](FitRequest* r) { r->sigma_column = "err"; }, "sigma_column: the data have no column"},
      {[](FitRequest* r) { r->sigma_mode = "relative"; }, "sigma_mode = 'relative' needs"},
      {[](FitRequest* r) {
         std::string error;
         REQUIRE(r->data.AddColumn("sigma", std::vector<double>(r->data.NumRows(), -1), &error));
       },
       "sigma -1 is not > 0"},
      {[](FitRequest* r) {
         r->start = {{"nope", 1}};
       },
       "start: unknown parameter 'nope'"},
      {[](FitRequest* r) {
         r->fix = {{"nope", 1}};
       },
       "fix: unknown parameter 'nope'"},
      {[](FitRequest* r) {
         r->bounds = {{"nope", 0, 1}};
       },
       "bounds: unknown parameter 'nope'"},
      {[](FitRequest* r) {
         r->start = {{"height", 1}};
         r->fix = {{"height", 1}};
       },
       "start.height: the parameter is also in fix"},
      {[](FitRequest* r) {
         r->start = {{"center", 50}};
         r->bounds = {{"center", 0, 20}};
       },
       "start.center = 50 is outside its bounds [0, 20]"},
      {[](FitRequest* r) {
         r->fix = {{"sigma", -1}};
       },
       "fix.sigma = -1 is outside its bounds"},
      {[](FitRequest* r) { r->loss = "sharp"; }, "loss = 'sharp'"},
      {[](FitRequest* r) { r->method = "newton"; }, "method = 'newton'"},
      {[](FitRequest* r) { r->max_iterations = -1; }, "max_iterations = -1"},
      {[](FitRequest* r) { r->starts = -2; }, "starts = -2"},
      {[](FitRequest* r) {
         r->model.family = "polynomial";
         r->model.degree = 9;
       },
       "data: 5 points but the model has 10 free parameters"},
  };
  for (size_t i = 0; i < cases.size(); ++i) {
    FitRequest request = PeakRequest(i + 1 == cases.size() ? 5 : 41);
    cases[i].spoil(&request);
    std::string admission_error;
    std::string prepare_error;
    int num_parameters = 0;
    PreparedFit prepared;
    INFO("case " << i);
    CHECK_FALSE(
        foothold::ValidateFitRequestForAdmission(request, &num_parameters, &admission_error));
    CHECK_FALSE(foothold::PrepareFit(request, &prepared, &prepare_error));
    CHECK(admission_error == prepare_error);
    CHECK(admission_error.find(cases[i].message_part) != std::string::npos);
  }
}

TEST_CASE("Admission: a good request passes and counts the model's parameters", "[server]") {
  int num_parameters = 0;
  std::string error;
  CHECK(foothold::ValidateFitRequestForAdmission(PeakRequest(41), &num_parameters, &error));
  CHECK(num_parameters == 4);
  FitRequest peaks = PeakRequest(41);
  peaks.model.family = "multi_gaussian";
  peaks.model.peaks = 3;
  CHECK(foothold::ValidateFitRequestForAdmission(peaks, &num_parameters, &error));
  CHECK(num_parameters == 10);
  // "auto" is checked against the widest model it may choose: 8 peaks, 25 parameters.
  peaks.model.peaks.reset();
  peaks.model.auto_peaks = true;
  peaks.fix = {{"baseline", 1}};
  CHECK(foothold::ValidateFitRequestForAdmission(peaks, &num_parameters, &error));
  CHECK(num_parameters == 25);
  FitRequest short_auto = PeakRequest(6);
  short_auto.model.family = "multi_gaussian";
  short_auto.model.auto_peaks = true;
  CHECK_FALSE(foothold::ValidateFitRequestForAdmission(short_auto, &num_parameters, &error));
  CHECK(error ==
        "model.peaks = 'auto': 6 points are too few to compare even one peak by AICc "
        "(need >= 7)");
}

TEST_CASE("Admission: what only the guesser can find is left to the job", "[server]") {
  // power_law needs x > 0; the data start at 0. Only its guesser looks.
  FitRequest request = PeakRequest(41);
  request.model.family = "power_law";
  int num_parameters = 0;
  std::string error;
  CHECK(foothold::ValidateFitRequestForAdmission(request, &num_parameters, &error));
  PreparedFit prepared;
  CHECK_FALSE(foothold::PrepareFit(request, &prepared, &error));
  CHECK(error.find("power_law") != std::string::npos);
}

TEST_CASE("Admission: 100 000 points are admitted without the guessers' cost", "[server]") {
  for (const FitRequest& request : {PeakRequest(kLargePoints), ExpressionRequest(kLargePoints)}) {
    int num_parameters = 0;
    std::string error;
    bool ok = false;
    const double seconds = SecondsOf(
        [&] { ok = foothold::ValidateFitRequestForAdmission(request, &num_parameters, &error); });
    INFO(error);
    CHECK(ok);
    CHECK(num_parameters == 4);
    WARN((request.model.IsFamily() ? "gaussian" : "expression")
         << ": admission of " << kLargePoints << " points in " << seconds * 1000 << " ms");
    CHECK(seconds < kMaxAdmissionSeconds);
  }
}
