// The router as a pure function, no sockets: authentication, method checks, and the
// documentation check that every route it serves is in docs/openapi.yaml.
#include <catch2/catch.hpp>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

#include "server/http/router.h"
#include "server/jobs/sqlite_job_store.h"

namespace foothold {
namespace {

namespace http = boost::beast::http;

HttpRequest MakeRequest(http::verb method, const std::string& target, const std::string& body = "",
                        const std::string& authorization = "") {
  HttpRequest request(method, target, 11);
  if (!body.empty()) request.set(http::field::content_type, "application/json");
  if (!authorization.empty()) request.set(http::field::authorization, authorization);
  request.body() = body;
  request.prepare_payload();
  return request;
}

std::unique_ptr<SqliteJobStore> FreshStore(const std::string& name) {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/router_test_" + name + ".db";
  for (const char* suffix : {"", "-wal", "-shm"}) std::remove((path + suffix).c_str());
  std::string error;
  auto store = SqliteJobStore::Open(path, &error);
  REQUIRE(store);
  return store;
}

}  // namespace

TEST_CASE("Router: bearer tokens guard the API, health endpoints stay open", "[server]") {
  auto store = FreshStore("auth");
  TokenAuth auth;
  auth.AddToken("s3cret-token");
  Metrics metrics;
  RouterContext context;
  context.store = store.get();
  context.metrics = &metrics;
  context.auth = &auth;
  const Router router(context);

  RouteReply missing = router.Handle(MakeRequest(http::verb::get, "/v1/fits"));
  CHECK(missing.response.result_int() == 401);
  CHECK(std::string(missing.response[http::field::www_authenticate]).rfind("Bearer", 0) == 0);
  RouteReply wrong =
      router.Handle(MakeRequest(http::verb::get, "/v1/fits", "", "Bearer s3cret-tokem"));
  CHECK(wrong.response.result_int() == 401);
  CHECK(std::string(wrong.response[http::field::www_authenticate]).find("invalid_token") !=
        std::string::npos);
  CHECK(router.Handle(MakeRequest(http::verb::get, "/v1/fits", "", "Basic s3cret-token"))
            .response.result_int() == 401);
  CHECK(router.Handle(MakeRequest(http::verb::get, "/v1/fits", "", "Bearer s3cret-token"))
            .response.result_int() == 200);
  CHECK(router.Handle(MakeRequest(http::verb::get, "/healthz")).response.result_int() == 200);
  CHECK(router.Handle(MakeRequest(http::verb::get, "/metrics")).response.result_int() == 200);

  context.open_health_endpoints = false;
  const Router closed(context);
  CHECK(closed.Handle(MakeRequest(http::verb::get, "/metrics")).response.result_int() == 401);
}

TEST_CASE("Router: a submitted fit is committed before the 202 and reported queued", "[server]") {
  auto store = FreshStore("submit");
  RouterContext context;
  context.store = store.get();
  const Router router(context);
  const RouteReply reply = router.Handle(
      MakeRequest(http::verb::post, "/v1/fits",
                  R"({"model": {"family": "line"}, "data": {"x": [1, 2, 3], "y": [2, 4, 6.5]}})"));
  REQUIRE(reply.response.result_int() == 202);
  CHECK(reply.route == "/v1/fits");
  const auto body = nlohmann::json::parse(reply.response.body());
  CHECK(body["state"] == "queued");
  JobRecord job;
  bool found = false;
  std::string error;
  REQUIRE(store->GetJob(body["id"], &job, &found, &error));
  CHECK(found);
  CHECK(reply.job_id == job.id);
}

TEST_CASE("Router: a full queue answers 429 with Retry-After and commits nothing", "[server]") {
  auto store = FreshStore("full");
  RouterContext context;
  context.store = store.get();
  context.limits.max_queue = 1;
  context.limits.retry_after_seconds = 7;
  const Router router(context);
  const std::string body =
      R"({"model": {"family": "line"}, "data": {"x": [1, 2, 3], "y": [2, 4, 6.5]}})";
  CHECK(router.Handle(MakeRequest(http::verb::post, "/v1/fits", body)).response.result_int() ==
        202);
  const RouteReply full = router.Handle(MakeRequest(http::verb::post, "/v1/fits", body));
  CHECK(full.response.result_int() == 429);
  CHECK(std::string(full.response[http::field::retry_after]) == "7");
  std::map<JobState, int> counts;
  std::string error;
  REQUIRE(store->CountByState(&counts, &error));
  CHECK(counts[JobState::kQueued] == 1);
}

TEST_CASE("Router: every route and method it serves is documented in docs/openapi.yaml",
          "[server]") {
  std::ifstream in(std::string(FOOTHOLD_SOURCE_DIR) + "/docs/openapi.yaml");
  REQUIRE(in);
  std::stringstream text;
  text << in.rdbuf();
  const std::string spec = text.str();
  CHECK(spec.find("openapi: 3.1") != std::string::npos);
  for (const RouteSpec& route : Router::Routes()) {
    const std::string key = "\n  " + route.path_template + ":\n";
    const size_t at = spec.find(key);
    INFO("route " << route.path_template);
    REQUIRE(at != std::string::npos);
    // The path's block runs to the next line indented by exactly two spaces.
    size_t end = at + key.size();
    while (true) {
      end = spec.find('\n', end);
      if (end == std::string::npos || (spec.compare(end, 3, "\n  ") == 0 && spec[end + 3] != ' '))
        break;
      ++end;
    }
    const std::string block =
        spec.substr(at, end == std::string::npos ? std::string::npos : end - at);
    for (std::string method : route.methods) {
      for (char& c : method) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
      INFO("method " << method);
      CHECK(block.find("\n    " + method + ":") != std::string::npos);
      CHECK(block.find("responses:") != std::string::npos);
    }
  }
}

}  // namespace foothold
