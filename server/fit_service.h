#pragma once
// Runs a fit request: validate, build the model and the problem, choose the start,
// minimise, compute statistics, judge. No JSON; the CLI and the daemon share this path.

#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/model.h"
#include "engine/multistart/multistart_options.h"
#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"
#include "server/fit_outcome.h"
#include "server/fit_request.h"

namespace foothold {

// Progress and cancellation of a running fit (the daemon's jobs). Both optional; called
// from the fitting threads.
struct FitHooks {
  std::function<void(int starts_finished, int starts_planned, double best_rss)> on_progress;
  std::function<bool()> should_stop;
};

// A request turned into engine values, ready to minimise. Move-only: `problem.model`
// points at `model`.
struct PreparedFit {
  std::unique_ptr<Model> model;
  Problem problem;
  Eigen::VectorXd start;  // size p, inside the bounds, fixed values in place
  LevenbergMarquardtOptions solver_options;
  std::string sigma_column;           // empty when unweighted
  ModelSpec model_spec;               // the request's model with "auto" resolved
  std::string start_origin;           // "user" or "guess:<candidate>"
  std::vector<std::string> guessed;   // parameters whose start the guesser chose
  std::vector<std::string> warnings;  // notes for people (from the guesser)
  std::vector<StartCandidate> candidates;  // seeded starts for multistart, best first
  SearchBox box;  // where the quasi-random starts look (server/fit_start.h)
};

// Every bad-input check lives here: false with a message naming the field (and the row
// or parameter) on the first problem found.
bool PrepareFit(const FitRequest& request, PreparedFit* out, std::string* error);

// The admission check of the daemon: every bad-input check of PrepareFit that needs no
// guesser and no fit (fields, model, expression, columns, sigma, bounds/start/fix names and
// values, limits), with PrepareFit's messages; `num_parameters` gets the model's count.
// Cheap: linear in the data. What only the guesser can find (data a family cannot
// describe, a start it cannot make) is reported when the job runs. With "peaks": "auto" the
// names are checked against the widest model auto may choose.
bool ValidateFitRequestForAdmission(const FitRequest& request, int* num_parameters,
                                    std::string* error);

// The model and the dataset it reads, for a request whose model is resolved (no "peaks":
// "auto"): what a plot of a stored result needs, without the guesser or a fit. PrepareFit's
// messages for bad data or a bad model.
bool BuildModelAndData(const FitRequest& request, std::unique_ptr<Model>* model, Dataset* data,
                       std::string* error);

// Minimises and describes the result; never fails: numerical outcomes are data.
FitOutcome RunPreparedFit(const FitRequest& request, const PreparedFit& prepared);
FitOutcome RunPreparedFit(const FitRequest& request, const PreparedFit& prepared,
                          const FitHooks& hooks);

// PrepareFit followed by RunPreparedFit.
bool RunFit(const FitRequest& request, FitOutcome* out, std::string* error);


// RunFit with hooks: should_stop is checked at every solver iteration (true stops the fit
// with termination "cancelled"), on_progress is called when a start finishes.
bool RunFit(const FitRequest& request, const FitHooks& hooks, FitOutcome* out,
            std::string* error);

}  // namespace foothold
