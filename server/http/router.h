#pragma once
// The router: a pure function from an HTTP request to a response, given the store, the
// workers and the limits. No sockets here, so every route is tested without a network;
// the connection only reads, calls Handle and writes.

#include <functional>
#include <map>
#include <string>
#include <vector>

#include "server/fit_request.h"
#include "server/http/auth.h"
#include "server/http/http_types.h"
#include "server/http/metrics.h"
#include "server/http/service_limits.h"
#include "server/jobs/job_store.h"
#include "server/jobs/worker_pool.h"

namespace foothold {

struct RouterContext {
  JobStore* store = nullptr;
  WorkerPool* workers = nullptr;  // may be null: jobs are committed but nobody is woken
  Metrics* metrics = nullptr;
  const TokenAuth* auth = nullptr;  // null or empty: no authentication
  ServiceLimits limits;
  // /healthz, /readyz and /metrics answer without a token. Default true.
  bool open_health_endpoints = true;
  std::function<bool()> is_shutting_down;
  std::function<int()> open_connections;
};

struct RouteReply {
  HttpResponse response;
  std::string route;   // template, e.g. "/v1/fits/{id}", for metrics and logs
  std::string job_id;  // the job this request concerned, for the log line
  // Set when the client asked Prefer: wait=N on a new fit: the connection polls
  // IsJobFinished and answers with RenderJob(request, id, true); reply.response is unused.
  std::string wait_job_id;
  double wait_seconds = 0;
};

struct RouteSpec {
  std::string path_template;
  std::vector<std::string> methods;
};

class Router {
 public:
  explicit Router(RouterContext context) : context_(std::move(context)) {}

  RouteReply Handle(const HttpRequest& request) const;
  bool IsJobFinished(const std::string& id) const;
  // The job as 202; as 200 with its result when `waited` (the client asked Prefer: wait)
  // and the job has finished.
  HttpResponse RenderJob(const HttpRequest& request, const std::string& id, bool waited) const;

  // Every route served, for the docs check.
  static const std::vector<RouteSpec>& Routes();

 private:
  using Params = std::map<std::string, std::string>;
  HttpResponse Dispatch(const HttpRequest& request, const std::string& route, const Params& path,
                        const Params& query, RouteReply* reply) const;

  // The web page (web_page.h): the recent fits, or one fit with ?fit=ID.
  HttpResponse Home(const HttpRequest& request, const Params& query) const;
  HttpResponse Ready(const HttpRequest& request) const;
  HttpResponse MetricsText(const HttpRequest& request) const;
  HttpResponse Families(const HttpRequest& request) const;
  HttpResponse SubmitFit(const HttpRequest& request, const Params& query, RouteReply* reply) const;
  HttpResponse ListFits(const HttpRequest& request, const Params& query) const;
  HttpResponse GetFit(const HttpRequest& request, const std::string& id,
                      const std::string& part) const;
  HttpResponse PlotFit(const HttpRequest& request, const std::string& id, bool basins) const;
  HttpResponse CancelFit(const HttpRequest& request, const std::string& id) const;
  HttpResponse SubmitBatch(const HttpRequest& request) const;
  HttpResponse GetBatch(const HttpRequest& request, const std::string& id) const;
  HttpResponse Guesses(const HttpRequest& request, const Params& query) const;

  // The request body as a FitRequest (JSON or CSV with the model in the query): 400, 415
  // or 422 problems through *problem.
  bool ReadFitRequest(const HttpRequest& request, const Params& query, FitRequest* out,
                      std::string* stored_document, HttpResponse* problem) const;
  // Limits and PrepareFit: false with a 422 problem.
  bool CheckFitRequest(const HttpRequest& request, const FitRequest& fit, std::string where,
                       HttpResponse* problem) const;
  bool LoadJob(const HttpRequest& request, const std::string& id, JobRecord* job,
               HttpResponse* problem) const;

  RouterContext context_;
};

}  // namespace foothold
