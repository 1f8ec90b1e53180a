// The job routes of the router: submitting, reading, listing, cancelling and plotting
// fits, batches and guesses.
#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <sstream>

#include "server/fit_service.h"
#include "server/http/http_helpers.h"
#include "server/http/problem_codec.h"
#include "server/http/router.h"
#include "server/job_codec.h"
#include "server/json_codec.h"
#include "server/model_comparison.h"
#include "server/svg_plot.h"

namespace foothold {
namespace http = boost::beast::http;
namespace {

std::string Target(const HttpRequest& request) { return std::string(request.target()); }

HttpResponse ProblemFor(const HttpRequest& request, int status, const std::string& slug,
                        const std::string& title, const std::string& detail) {
  return MakeProblem(request.version(), status, slug, title, detail, Target(request));
}

bool ParseInt(const std::string& text, int low, int high, int* value) {
  if (text.empty() || text.size() > 9) return false;
  for (char c : text) {
    if (!std::isdigit(static_cast<unsigned char>(c))) return false;
  }
  *value = std::stoi(text);
  return *value >= low && *value <= high;
}

std::vector<std::string> SplitComma(const std::string& text) {
  std::vector<std::string> parts;
  std::stringstream in(text);
  std::string part;
  while (std::getline(in, part, ',')) {
    if (!part.empty()) parts.push_back(part);
  }
  return parts;
}

// Prefer: wait=N (RFC 7240); 0 when absent or malformed.
double PreferredWait(const HttpRequest& request) {
  const std::string prefer(request[http::field::prefer]);
  const size_t at = prefer.find("wait=");
  if (at == std::string::npos) return 0;
  int seconds = 0;
  size_t end = at + 5;
  while (end < prefer.size() && std::isdigit(static_cast<unsigned char>(prefer[end]))) ++end;
  if (!ParseInt(prefer.substr(at + 5, end - at - 5), 0, 86400, &seconds)) return 0;
  return seconds;
}

// A comparison's result is the winner's: plot with the winner's family (its peak count as
// chosen, so "auto" is not resolved again).
void UseResultModel(const Json& model, FitRequest* fit) {
  if (!model.is_object() || !model.value("family", Json()).is_string()) return;
  fit->model = ModelSpec{};
  fit->model.family = model["family"].get<std::string>();
  if (model.value("degree", Json()).is_number_integer())
    fit->model.degree = model["degree"].get<int>();
  if (model.value("peaks", Json()).is_number_integer())
    fit->model.peaks = model["peaks"].get<int>();
  fit->compare.clear();
}

}  // namespace

bool Router::ReadFitRequest(const HttpRequest& request, const Params& query, FitRequest* out,
                            std::string* stored_document, HttpResponse* problem) const {
  const std::string media = MediaType(std::string(request[http::field::content_type]));
  if (media == "application/json") {
    for (const auto& [name, value] : query) {
      *problem = ProblemFor(request, 400, "invalid-query", "Bad Request",
                            "query parameter '" + name +
                                "': a JSON body carries the whole request; model query parameters "
                                "are for text/csv bodies");
      return false;
    }
    std::string error;
    if (!DecodeFitRequestText(request.body(), out, &error)) {
      *problem = ProblemFor(request, 400, "invalid-request", "Bad Request", error);
      return false;
    }
    if (out->data.NumRows() == 0) {
      *problem = ProblemFor(request, 400, "invalid-request", "Bad Request",
                            "data: required, an object of equal-length number arrays such as "
                            "{\"x\": [...], \"y\": [...]}");
      return false;
    }
    // A comparison names its families in compare; model is then optional.
    if (out->compare.empty() && !out->model.IsFamily() && out->model.expression.empty()) {
      *problem = ProblemFor(request, 400, "invalid-request", "Bad Request",
                            "model: required, {\"family\": \"<name>\"} or {\"expression\": "
                            "\"...\", \"parameters\": [...]} (or compare: [\"<family>\", ...])");
      return false;
    }
    *stored_document = request.body();
    return true;
  }
  if (media == "text/csv") {
    std::string error;
    if (!DataTableFromCsv(request.body(), &out->data, &error)) {
      *problem = ProblemFor(request, 400, "invalid-csv", "Bad Request", "body (CSV): " + error);
      return false;
    }
    const bool has_family = query.count("family") > 0;
    const bool has_expr = query.count("expr") > 0;
    if (has_family == has_expr) {
      *problem = ProblemFor(request, 400, "invalid-query", "Bad Request",
                            "query: a CSV body needs exactly one of family=<name> or "
                            "expr=<expression> (with params=a,b,...)");
      return false;
    }
    for (const auto& [name, value] : query) {
      static const char* kKnown[] = {"family", "expr",   "params", "peaks",   "degree",
                                     "label",  "starts", "seed",   "response"};
      if (std::find_if(std::begin(kKnown), std::end(kKnown),
                       [&](const char* known) { return name == known; }) == std::end(kKnown)) {
        *problem =
            ProblemFor(request, 400, "invalid-query", "Bad Request",
                       "query parameter '" + name +
                           "': unknown (expected family, expr, params, peaks, degree, label, "
                           "starts, seed, response)");
        return false;
      }
    }
    if (has_family) out->model.family = query.at("family");
    if (has_expr) out->model.expression = query.at("expr");
    if (query.count("params")) out->model.parameters = SplitComma(query.at("params"));
    if (query.count("label")) out->label = query.at("label");
    if (query.count("response")) out->response = query.at("response");
    int value = 0;
    if (query.count("peaks")) {
      if (query.at("peaks") == "auto") {
        out->model.auto_peaks = true;
      } else if (ParseInt(query.at("peaks"), 1, 1000, &value)) {
        out->model.peaks = value;
      } else {
        *problem = ProblemFor(request, 400, "invalid-query", "Bad Request",
                              "query parameter 'peaks' = '" + query.at("peaks") +
                                  "': expected an integer >= 1 or 'auto'");
        return false;
      }
    }
    for (const char* name : {"degree", "starts", "seed"}) {
      if (!query.count(name)) continue;
      if (!ParseInt(query.at(name), 0, 1000000000, &value)) {
        *problem = ProblemFor(request, 400, "invalid-query", "Bad Request",
                              std::string("query parameter '") + name + "' = '" + query.at(name) +
                                  "': expected a non-negative integer");
        return false;
      }
      if (std::string(name) == "degree") out->model.degree = value;
      if (std::string(name) == "starts") out->starts = value;
      if (std::string(name) == "seed") out->seed = static_cast<std::uint64_t>(value);
    }
    *stored_document = EncodeFitRequest(*out).dump();
    return true;
  }
  *problem = ProblemFor(request, 415, "unsupported-media-type", "Unsupported Media Type",
                        "Content-Type '" + std::string(request[http::field::content_type]) +
                            "': expected application/json (a request document) or text/csv "
                            "(data, with the model in query parameters)");
  return false;
}

bool Router::CheckFitRequest(const HttpRequest& request, const FitRequest& fit, std::string where,
                             HttpResponse* problem) const {
  const ServiceLimits& limits = context_.limits;
  auto refuse = [&](const std::string& detail) {
    *problem = ProblemFor(request, 422, "limit-exceeded", "Unprocessable Content", where + detail);
    return false;
  };
  if (fit.data.NumRows() > limits.max_points) {
    return refuse("data: " + std::to_string(fit.data.NumRows()) +
                  " points exceed the limit max_points = " + std::to_string(limits.max_points));
  }
  if (fit.starts > limits.max_starts) {
    return refuse("starts = " + std::to_string(fit.starts) +
                  ": exceeds the limit max_starts = " + std::to_string(limits.max_starts));
  }
  if (static_cast<int>(fit.model.expression.size()) > limits.max_expression_length) {
    return refuse("model.expression: " + std::to_string(fit.model.expression.size()) +
                  " characters exceed the limit max_expression_length = " +
                  std::to_string(limits.max_expression_length));
  }
  // Admission checks without guessers or fits, so its cost is linear in the data; what only
  // a guesser can find is the job's failure (docs/api.md).
  int num_parameters = 0;
  std::string error;
  const bool admitted = fit.compare.empty()
                            ? ValidateFitRequestForAdmission(fit, &num_parameters, &error)
                            : ValidateComparisonForAdmission(fit, &num_parameters, &error);
  if (!admitted) {
    *problem = ProblemFor(request, 422, "invalid-fit", "Unprocessable Content", where + error);
    return false;
  }
  if (num_parameters > limits.max_parameters) {
    return refuse(
        "model: " + std::to_string(num_parameters) +
        " parameters exceed the limit max_parameters = " + std::to_string(limits.max_parameters));
  }
  return true;
}

HttpResponse Router::SubmitFit(const HttpRequest& request, const Params& query,
                               RouteReply* reply) const {
  FitRequest fit;
  std::string document;
  HttpResponse problem;
  if (!ReadFitRequest(request, query, &fit, &document, &problem)) return problem;
  if (!CheckFitRequest(request, fit, "", &problem)) return problem;
  std::vector<std::string> ids;
  bool queue_full = false;
  std::string error;
  if (!context_.store->InsertJobs(false, {NewJob{fit.label, document}}, context_.limits.max_queue,
                                  nullptr, &ids, &queue_full, &error)) {
    if (queue_full) {
      HttpResponse response =
          ProblemFor(request, 429, "queue-full", "Too Many Requests",
                     "the job queue holds its limit of max_queue = " +
                         std::to_string(context_.limits.max_queue) + " queued jobs; retry later");
      response.set(http::field::retry_after, std::to_string(context_.limits.retry_after_seconds));
      return response;
    }
    return ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
  }
  if (context_.workers) context_.workers->Notify();
  reply->job_id = ids[0];
  const double wait = std::min(PreferredWait(request), context_.limits.max_wait_seconds);
  if (wait > 0) {
    // The connection answers once the job is done or the wait is over (RenderJob then).
    reply->wait_job_id = ids[0];
    reply->wait_seconds = wait;
    return HttpResponse{};
  }
  // Without Prefer: wait the answer is always 202, even when a fast worker already finished
  // the job: clients branch on the status, and a race must not change it.
  return RenderJob(request, ids[0], false);
}

bool Router::IsJobFinished(const std::string& id) const {
  JobRecord job;
  bool found = false;
  std::string error;
  return context_.store->GetJob(id, &job, &found, &error) && found && IsFinished(job.state);
}

HttpResponse Router::RenderJob(const HttpRequest& request, const std::string& id,
                               bool waited) const {
  JobRecord job;
  HttpResponse problem;
  if (!LoadJob(request, id, &job, &problem)) return problem;
  const bool finished = waited && IsFinished(job.state);
  HttpResponse response = JsonResponse(request, finished ? 200 : 202, EncodeJob(job, finished));
  response.set(http::field::location, "/v1/fits/" + id);
  if (finished) response.set("Preference-Applied", "wait");
  return response;
}

bool Router::LoadJob(const HttpRequest& request, const std::string& id, JobRecord* job,
                     HttpResponse* problem) const {
  bool found = false;
  std::string error;
  if (!context_.store->GetJob(id, job, &found, &error)) {
    *problem = ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
    return false;
  }
  if (!found) {
    *problem = ProblemFor(request, 404, "job-not-found", "Not Found",
                          "fit '" + id + "': no such job (it may have been purged)");
    return false;
  }
  return true;
}

HttpResponse Router::GetFit(const HttpRequest& request, const std::string& id,
                            const std::string& part) const {
  JobRecord job;
  HttpResponse problem;
  if (!LoadJob(request, id, &job, &problem)) return problem;
  if (part.empty()) return JsonResponse(request, 200, EncodeJob(job, true));
  if (job.result_json.empty()) {
    return ProblemFor(
        request, 409, "not-finished", "Conflict",
        "fit '" + id + "' is " + ToString(job.state) + ": its " + part + " exist once it is done");
  }
  Json body = Json::object();
  body["id"] = id;
  body[part] = ResultMember(job.result_json, part);
  return JsonResponse(request, 200, body);
}

HttpResponse Router::PlotFit(const HttpRequest& request, const std::string& id, bool basins) const {
  JobRecord job;
  HttpResponse problem;
  if (!LoadJob(request, id, &job, &problem)) return problem;
  if (job.result_json.empty()) {
    return ProblemFor(request, 409, "not-finished", "Conflict",
                      "fit '" + id + "' is " + ToString(job.state) +
                          ": its plot exists once it is "
                          "done");
  }
  const std::string title = job.label.empty() ? "fit " + id : job.label;
  std::string svg;
  if (basins) {
    std::vector<BasinBar> bars;
    const Json list = ResultMember(job.result_json, "basins");
    const Json starts = ResultMember(job.result_json, "starts");
    double converged = 0;
    if (starts.is_array()) {
      for (const Json& start : starts) converged += start.value("converged", false) ? 1 : 0;
    }
    if (list.is_array()) {
      for (const Json& basin : list) {
        BasinBar bar;
        bar.id = basin.value("id", 0);
        bar.delta_rss = basin.value("delta_rss", 0.0);
        const double count = basin.value("starts", 0.0);
        bar.share = converged > 0 ? count / converged : 0;
        bars.push_back(bar);
      }
    }
    svg = RenderBasinsSvg(title + ": basins", bars);
  } else {
    // The stored request and the result's resolved model (the winner of a comparison, the
    // peak count "auto" chose): model and data are rebuilt without the guesser or a fit.
    FitRequest fit;
    std::string error;
    const bool decoded = DecodeFitRequestText(job.request_json, &fit, &error);
    if (decoded && (!fit.compare.empty() || fit.model.auto_peaks))
      UseResultModel(ResultMember(job.result_json, "model"), &fit);
    std::unique_ptr<Model> model;
    Dataset data;
    if (!decoded || !BuildModelAndData(fit, &model, &data, &error)) {
      return ProblemFor(request, 409, "not-plottable", "Conflict", "fit '" + id + "': " + error);
    }
    const Json best = ResultMember(job.result_json, "best");
    const std::vector<std::string>& names = model->ParameterNames();
    Eigen::VectorXd parameters(static_cast<Eigen::Index>(names.size()));
    for (size_t i = 0; i < names.size(); ++i) {
      const bool has_value = best.is_object() && best.contains("parameters") &&
                             best["parameters"].contains(names[i]) &&
                             best["parameters"][names[i]]["value"].is_number();
      if (!has_value) {
        return ProblemFor(
            request, 409, "not-plottable", "Conflict",
            "fit '" + id + "': the result has no value for parameter '" + names[i] + "'");
      }
      parameters[static_cast<Eigen::Index>(i)] =
          best["parameters"][names[i]]["value"].get<double>();
    }
    FitPlotData plot;
    plot.title = title;
    const int n = data.NumPoints();
    std::vector<double> fitted(static_cast<size_t>(n), std::numeric_limits<double>::quiet_NaN());
    model->Evaluate(data.predictors, parameters.data(), fitted.data());
    for (int i = 0; i < n; ++i) {
      plot.x.push_back(data.predictors.cols() > 0 ? data.predictors(i, 0) : i);
      plot.y.push_back(data.response[i]);
    }
    plot.fitted = fitted;
    svg = RenderFitSvg(plot);
  }
  HttpResponse response(http::status::ok, request.version());
  response.set(http::field::content_type, "image/svg+xml");
  response.body() = svg;
  response.prepare_payload();
  return response;
}

HttpResponse Router::CancelFit(const HttpRequest& request, const std::string& id) const {
  JobState previous = JobState::kQueued;
  bool found = false;
  std::string error;
  if (!context_.store->CancelJob(id, &previous, &found, &error)) {
    return ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
  }
  if (!found) {
    return ProblemFor(request, 404, "job-not-found", "Not Found", "fit '" + id + "': no such job");
  }
  if (IsFinished(previous)) {
    return ProblemFor(request, 409, "already-finished", "Conflict",
                      "fit '" + id + "' is already " + ToString(previous) + "; nothing to cancel");
  }
  if (previous == JobState::kRunning && context_.workers) context_.workers->Cancel(id);
  JobRecord job;
  HttpResponse problem;
  if (!LoadJob(request, id, &job, &problem)) return problem;
  return JsonResponse(request, previous == JobState::kRunning ? 202 : 200, EncodeJob(job, false));
}

HttpResponse Router::ListFits(const HttpRequest& request, const Params& query) const {
  JobFilter filter;
  for (const auto& [name, value] : query) {
    if (name == "state") {
      if (!JobStateFromString(value, &filter.state)) {
        return ProblemFor(request, 400, "invalid-query", "Bad Request",
                          "query parameter 'state' = '" + value +
                              "': expected queued, running, done, failed or cancelled");
      }
      filter.has_state = true;
    } else if (name == "label") {
      filter.label = value;
    } else if (name == "created_since") {
      if (!ParseRfc3339(value, &filter.created_since_ms)) {
        return ProblemFor(request, 400, "invalid-query", "Bad Request",
                          "query parameter 'created_since' = '" + value +
                              "': expected an RFC 3339 time such as 2026-12-02T01:00:00Z");
      }
    } else if (name == "limit") {
      if (!ParseInt(value, 1, 500, &filter.limit)) {
        return ProblemFor(
            request, 400, "invalid-query", "Bad Request",
            "query parameter 'limit' = '" + value + "': expected an integer in [1, 500]");
      }
    } else if (name == "cursor") {
      int cursor = 0;
      if (!ParseInt(value, 1, 999999999, &cursor)) {
        return ProblemFor(request, 400, "invalid-query", "Bad Request",
                          "query parameter 'cursor' = '" + value +
                              "': expected the next_cursor of a previous page");
      }
      filter.cursor = cursor;
    } else {
      return ProblemFor(request, 400, "invalid-query", "Bad Request",
                        "query parameter '" + name +
                            "': unknown (expected state, label, created_since, limit, cursor)");
    }
  }
  JobPage page;
  std::string error;
  if (!context_.store->ListJobs(filter, &page, &error)) {
    return ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
  }
  std::string next = "/v1/fits?limit=" + std::to_string(filter.limit) +
                     "&cursor=" + std::to_string(page.next_cursor);
  if (filter.has_state) next += std::string("&state=") + ToString(filter.state);
  return JsonResponse(request, 200, EncodeJobPage(page, next));
}

HttpResponse Router::SubmitBatch(const HttpRequest& request) const {
  if (MediaType(std::string(request[http::field::content_type])) != "application/json") {
    return ProblemFor(request, 415, "unsupported-media-type", "Unsupported Media Type",
                      "Content-Type '" + std::string(request[http::field::content_type]) +
                          "': a batch is an application/json document");
  }
  std::vector<FitRequest> requests;
  std::vector<NewJob> jobs;
  std::string error;
  if (!DecodeBatchRequest(request.body(), &requests, &jobs, &error)) {
    return ProblemFor(request, 400, "invalid-request", "Bad Request", error);
  }
  if (static_cast<int>(jobs.size()) > context_.limits.max_batch_jobs) {
    return ProblemFor(request, 422, "limit-exceeded", "Unprocessable Content",
                      "datasets: " + std::to_string(jobs.size()) +
                          " datasets exceed the limit max_batch_jobs = " +
                          std::to_string(context_.limits.max_batch_jobs));
  }
  HttpResponse problem;
  for (size_t i = 0; i < requests.size(); ++i) {
    if (!CheckFitRequest(request, requests[i], "datasets[" + std::to_string(i) + "]: ", &problem)) {
      return problem;
    }
  }
  std::string batch_id;
  std::vector<std::string> ids;
  bool queue_full = false;
  if (!context_.store->InsertJobs(true, jobs, context_.limits.max_queue, &batch_id, &ids,
                                  &queue_full, &error)) {
    if (queue_full) {
      HttpResponse response =
          ProblemFor(request, 429, "queue-full", "Too Many Requests",
                     "the batch's " + std::to_string(jobs.size()) +
                         " jobs do not fit in the queue (max_queue = " +
                         std::to_string(context_.limits.max_queue) + "); nothing was accepted");
      response.set(http::field::retry_after, std::to_string(context_.limits.retry_after_seconds));
      return response;
    }
    return ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
  }
  if (context_.workers) {
    for (size_t i = 0; i < ids.size(); ++i) context_.workers->Notify();
  }
  HttpResponse response = JsonResponse(request, 202, EncodeBatchAccepted(batch_id, ids, jobs));
  response.set(http::field::location, "/v1/batches/" + batch_id);
  return response;
}

HttpResponse Router::GetBatch(const HttpRequest& request, const std::string& id) const {
  BatchRecord batch;
  bool found = false;
  std::string error;
  if (!context_.store->GetBatch(id, &batch, &found, &error)) {
    return ProblemFor(request, 503, "store-unavailable", "Service Unavailable", error);
  }
  if (!found) {
    return ProblemFor(request, 404, "batch-not-found", "Not Found",
                      "batch '" + id + "': no such batch");
  }
  return JsonResponse(request, 200, EncodeBatch(batch));
}

HttpResponse Router::Guesses(const HttpRequest& request, const Params& query) const {
  FitRequest fit;
  std::string document;
  HttpResponse problem;
  if (!ReadFitRequest(request, query, &fit, &document, &problem)) return problem;
  if (fit.data.NumRows() > context_.limits.max_points) {
    return ProblemFor(
        request, 422, "limit-exceeded", "Unprocessable Content",
        "data: " + std::to_string(fit.data.NumRows()) +
            " points exceed the limit max_points = " + std::to_string(context_.limits.max_points));
  }
  PreparedFit prepared;
  std::string error;
  if (!PrepareFit(fit, &prepared, &error)) {
    return ProblemFor(request, 422, "invalid-fit", "Unprocessable Content", error);
  }
  return JsonResponse(request, 200, EncodeGuesses(prepared));
}

}  // namespace foothold
