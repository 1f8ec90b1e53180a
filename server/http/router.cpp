#include "server/http/router.h"

#include <cctype>
#include <sstream>

#include "server/http/http_helpers.h"
#include "server/http/problem_codec.h"
#include "server/http/web_page.h"
#include "server/job_codec.h"
#include "server/json_codec.h"

namespace foothold {
namespace http = boost::beast::http;
namespace {

// Splits "/a/b" into {"a", "b"}; an empty segment (double slash) stays so it never
// matches a template.
std::vector<std::string> Segments(const std::string& path) {
  std::vector<std::string> parts;
  size_t begin = 1;
  while (begin <= path.size()) {
    const size_t end = path.find('/', begin);
    parts.push_back(path.substr(begin, end == std::string::npos ? std::string::npos : end - begin));
    if (end == std::string::npos) break;
    begin = end + 1;
  }
  if (parts.size() == 1 && parts[0].empty()) parts.clear();
  return parts;
}

bool MatchTemplate(const std::string& path_template, const std::string& path,
                   std::map<std::string, std::string>* params) {
  const std::vector<std::string> want = Segments(path_template);
  const std::vector<std::string> have = Segments(path);
  if (want.size() != have.size()) return false;
  std::map<std::string, std::string> found;
  for (size_t i = 0; i < want.size(); ++i) {
    if (want[i].size() > 2 && want[i].front() == '{') {
      if (have[i].empty()) return false;
      found[want[i].substr(1, want[i].size() - 2)] = have[i];
    } else if (want[i] != have[i]) {
      return false;
    }
  }
  *params = found;
  return true;
}

bool IsOpenRoute(const std::string& route) {
  return route == "/healthz" || route == "/readyz" || route == "/metrics";
}

}  // namespace

const std::vector<RouteSpec>& Router::Routes() {
  static const std::vector<RouteSpec> kRoutes = {
      {"/", {"GET"}},
      {"/healthz", {"GET"}},
      {"/readyz", {"GET"}},
      {"/metrics", {"GET"}},
      {"/v1/families", {"GET"}},
      {"/v1/fits", {"GET", "POST"}},
      {"/v1/fits/{id}", {"GET", "DELETE"}},
      {"/v1/fits/{id}/starts", {"GET"}},
      {"/v1/fits/{id}/basins", {"GET"}},
      {"/v1/fits/{id}/plot.svg", {"GET"}},
      {"/v1/fits/{id}/basins.svg", {"GET"}},
      {"/v1/batches", {"POST"}},
      {"/v1/batches/{id}", {"GET"}},
      {"/v1/guesses", {"POST"}},
  };
  return kRoutes;
}

RouteReply Router::Handle(const HttpRequest& request) const {
  RouteReply reply;
  const std::string target(request.target());
  std::string path = target.substr(0, target.find('?'));
  const std::string query_text =
      target.find('?') == std::string::npos ? "" : target.substr(target.find('?') + 1);
  if (path.size() > 1 && path.back() == '/') path.pop_back();
  const RouteSpec* matched = nullptr;
  Params path_params;
  for (const RouteSpec& spec : Routes()) {
    if (MatchTemplate(spec.path_template, path, &path_params)) {
      matched = &spec;
      break;
    }
  }
  if (!matched) {
    reply.route = "unmatched";
    reply.response =
        MakeProblem(request.version(), 404, "not-found", "Not Found",
                    "no resource at '" + path + "' (see GET / or docs/api.md)", target);
    return reply;
  }
  reply.route = matched->path_template;
  if (path_params.count("id")) reply.job_id = path_params["id"];
  const std::string method(request.method_string());
  bool allowed = false;
  std::string allow;
  for (const std::string& name : matched->methods) {
    allowed |= name == method;
    allow += (allow.empty() ? "" : ", ") + name;
  }
  if (method == "HEAD" && !allowed) allowed = false;
  if (!allowed) {
    reply.response = MakeProblem(request.version(), 405, "method-not-allowed", "Method Not Allowed",
                                 "method " + method + " is not allowed on " +
                                     matched->path_template + " (allowed: " + allow + ")",
                                 target);
    reply.response.set(http::field::allow, allow);
    return reply;
  }
  const bool needs_token = !(context_.open_health_endpoints && IsOpenRoute(reply.route));
  if (needs_token && context_.auth && context_.auth->IsEnabled() &&
      !context_.auth->IsAuthorized(std::string(request[http::field::authorization]))) {
    const bool presented = request.find(http::field::authorization) != request.end();
    reply.response =
        MakeProblem(request.version(), 401, "unauthorized", "Unauthorized",
                    presented ? "the bearer token is not valid"
                              : "this resource needs an Authorization: Bearer <token> header",
                    target);
    reply.response.set(http::field::www_authenticate,
                       presented ? "Bearer realm=\"foothold\", error=\"invalid_token\""
                                 : "Bearer realm=\"foothold\"");
    return reply;
  }
  Params query;
  std::string query_error;
  if (!ParseQuery(query_text, &query, &query_error)) {
    reply.response =
        MakeProblem(request.version(), 400, "invalid-query", "Bad Request", query_error, target);
    return reply;
  }
  reply.response = Dispatch(request, reply.route, path_params, query, &reply);
  return reply;
}

HttpResponse Router::Dispatch(const HttpRequest& request, const std::string& route,
                              const Params& path, const Params& query, RouteReply* reply) const {
  const bool is_post = request.method() == http::verb::post;
  const std::string id = path.count("id") ? path.at("id") : "";
  if (route == "/") return Home(request, query);
  if (route == "/healthz") return JsonResponse(request, 200, Json{{"status", "ok"}});
  if (route == "/readyz") return Ready(request);
  if (route == "/metrics") return MetricsText(request);
  if (route == "/v1/families") return Families(request);
  if (route == "/v1/fits")
    return is_post ? SubmitFit(request, query, reply) : ListFits(request, query);
  if (route == "/v1/fits/{id}") {
    return request.method() == http::verb::delete_ ? CancelFit(request, id)
                                                   : GetFit(request, id, "");
  }
  if (route == "/v1/fits/{id}/starts") return GetFit(request, id, "starts");
  if (route == "/v1/fits/{id}/basins") return GetFit(request, id, "basins");
  if (route == "/v1/fits/{id}/plot.svg") return PlotFit(request, id, false);
  if (route == "/v1/fits/{id}/basins.svg") return PlotFit(request, id, true);
  if (route == "/v1/batches") return SubmitBatch(request);
  if (route == "/v1/batches/{id}") return GetBatch(request, id);
  return Guesses(request, query);
}

HttpResponse Router::Ready(const HttpRequest& request) const {
  std::string why;
  if (context_.is_shutting_down && context_.is_shutting_down())
    why = "shutting down";
  else if (!context_.store->IsReachable())
    why = "the job store does not answer";
  else if (context_.workers && !context_.workers->IsRunning())
    why = "the workers are not running";
  if (!why.empty()) {
    return MakeProblem(request.version(), 503, "not-ready", "Service Unavailable", why,
                       std::string(request.target()));
  }
  return JsonResponse(request, 200, Json{{"status", "ready"}});
}

HttpResponse Router::MetricsText(const HttpRequest& request) const {
  MetricsSnapshotInputs inputs;
  std::string error;
  context_.store->CountByState(&inputs.jobs_by_state, &error);
  if (context_.workers) {
    inputs.busy_workers = context_.workers->NumBusy();
    inputs.num_workers = context_.workers->NumWorkers();
  }
  if (context_.open_connections) inputs.open_connections = context_.open_connections();
  HttpResponse response(http::status::ok, request.version());
  response.set(http::field::content_type, "text/plain; version=0.0.4; charset=utf-8");
  response.body() = context_.metrics ? context_.metrics->Render(inputs) : "";
  response.prepare_payload();
  return response;
}

HttpResponse Router::Families(const HttpRequest& request) const {
  return JsonResponse(request, 200, EncodeFamilies());
}

HttpResponse Router::Home(const HttpRequest& request, const Params& query) const {
  for (const auto& [key, value] : query) {
    if (key != "fit") {
      return MakeProblem(request.version(), 400, "invalid-query", "Bad Request",
                         "query parameter '" + key + "' is not known here (the page takes fit=ID)",
                         std::string(request.target()));
    }
  }
  std::string html;
  if (query.count("fit")) {
    JobRecord job;
    HttpResponse problem;
    if (!LoadJob(request, query.at("fit"), &job, &problem)) return problem;
    html = RenderFitPage(job);
  } else {
    JobFilter filter;
    filter.limit = 50;
    JobPage page;
    std::string error;
    if (!context_.store->ListJobs(filter, &page, &error)) {
      return MakeProblem(request.version(), 503, "store-unavailable", "Service Unavailable", error,
                         std::string(request.target()));
    }
    html = RenderJobsPage(page);
  }
  HttpResponse response(http::status::ok, request.version());
  response.set(http::field::content_type, "text/html; charset=utf-8");
  response.body() = std::move(html);
  response.prepare_payload();
  return response;
}

}  // namespace foothold
