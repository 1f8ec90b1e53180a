// The client's URL parsing, and its one connection against a real daemon: kept alive
// across requests, reopened once when the daemon has closed it for idling.
#include "server/http/http_client.h"

#include <catch2/catch.hpp>
#include <chrono>
#include <string>
#include <thread>

#include "tests/server/http_test_client.h"

namespace foothold {
namespace {

// The daemon drops a connection that sends no request for this long.
constexpr double kIdleSeconds = 0.2;

}  // namespace

TEST_CASE("DaemonUrl: http://HOST:PORT, the port defaulting to 80", "[server]") {
  DaemonUrl url;
  std::string error;
  REQUIRE(DaemonUrl::Parse("http://127.0.0.1:8470", &url, &error));
  CHECK(url.host == "127.0.0.1");
  CHECK(url.port == "8470");
  REQUIRE(DaemonUrl::Parse("http://fits.lab/", &url, &error));
  CHECK(url.port == "80");
  CHECK(url.ToString() == "http://fits.lab:80");

  CHECK_FALSE(DaemonUrl::Parse("127.0.0.1:8470", &url, &error));
  CHECK(error == "--url '127.0.0.1:8470': expected http://HOST:PORT");
  CHECK_FALSE(DaemonUrl::Parse("http://h:8470/v1", &url, &error));
  CHECK(error == "--url 'http://h:8470/v1': expected no path after HOST:PORT");
  CHECK_FALSE(DaemonUrl::Parse("http://h:0", &url, &error));
  CHECK(error == "--url 'http://h:0': port '0' is not a number from 1 to 65535");
  CHECK_FALSE(DaemonUrl::Parse("http://:8470", &url, &error));
  CHECK(error == "--url 'http://:8470': no host");
}

TEST_CASE("HttpClient: one kept-alive connection, reopened after the daemon closed it",
          "[server]") {
  testing::Daemon daemon(testing::FreshStore("http_client"),
                         {"--header-timeout-seconds", std::to_string(kIdleSeconds)});
  REQUIRE(daemon.port() > 0);
  HttpClient client(DaemonUrl{"127.0.0.1", std::to_string(daemon.port())}, "", 10);
  HttpClientReply reply;
  std::string error;
  for (int k = 0; k < 3; ++k) {
    REQUIRE(client.Send("GET", "/healthz", "", {}, &reply, &error));
    CHECK(reply.status == 200);
  }
  // Three requests, one connection: the daemon counts the open ones.
  CHECK(testing::Request(daemon.port(), "GET", "/metrics")
            .body.find("foothold_open_connections 2\n") != std::string::npos);

  std::this_thread::sleep_for(std::chrono::duration<double>(4 * kIdleSeconds));
  REQUIRE(client.Send("GET", "/v1/fits/f00000000000dead", "", {}, &reply, &error));
  CHECK(reply.status == 404);
  CHECK(reply.content_type == "application/problem+json");
}

}  // namespace foothold
