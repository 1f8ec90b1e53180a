// Operating the daemon: authentication over HTTP, backpressure with a tiny queue, slow
// clients cut off by the header timeout, and a graceful SIGTERM whose leftovers a restart
// finishes. Every loop is bounded in count and time; all traffic is loopback.
#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>

#include <catch2/catch.hpp>
#include <fstream>
#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "tests/server/http_test_client.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::Request;

// A decay with enough points and starts that a job takes a noticeable moment.
std::string DecayRequest(int variant, int starts) {
  std::string x, y;
  for (int i = 0; i < 400; ++i) {
    const double t = i * 0.02;
    const double value = (5 + variant) * std::exp(-t / 1.3) + 0.2 + 0.01 * std::sin(17.0 * i);
    x += (i ? "," : "") + std::to_string(t);
    y += (i ? "," : "") + std::to_string(value);
  }
  return R"({"label": "decay-)" + std::to_string(variant) +
         R"(", "model": {"family": "exp_decay"}, "starts": )" + std::to_string(starts) +
         R"(, "data": {"x": [)" + x + "], \"y\": [" + y + "]}}";
}

bool WaitAllDone(int port, const std::vector<std::string>& ids, std::chrono::seconds timeout) {
  const auto until = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < until) {
    size_t done = 0;
    for (const std::string& id : ids) {
      const testing::HttpReply reply = Request(port, "GET", "/v1/fits/" + id);
      if (reply.status == 200 && json::parse(reply.body)["state"] == "done") ++done;
    }
    if (done == ids.size()) return true;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  return false;
}

}  // namespace

TEST_CASE("Daemon: 401 without or with a wrong token, 2xx with it", "[server]") {
  const std::string store = testing::FreshStore("auth");
  const std::string tokens = store + ".tokens";
  std::ofstream(tokens) << "# operators\n\nfirst-token\nsecond-token\n";
  testing::Daemon daemon(store, {"--token-file", tokens});
  REQUIRE(daemon.port() > 0);
  const testing::HttpReply none = Request(daemon.port(), "GET", "/v1/fits");
  CHECK(none.status == 401);
  CHECK(none.Header("WWW-Authenticate").rfind("Bearer", 0) == 0);
  CHECK(none.content_type == "application/problem+json");
  CHECK(Request(daemon.port(), "GET", "/v1/fits", "", "", {{"Authorization", "Bearer nope"}})
            .status == 401);
  CHECK(
      Request(daemon.port(), "GET", "/v1/fits", "", "", {{"Authorization", "Bearer second-token"}})
          .status == 200);
  CHECK(Request(daemon.port(), "GET", "/healthz").status == 200);
}

TEST_CASE("Daemon: a tiny queue answers 429 with Retry-After and loses no accepted job",
          "[server]") {
  testing::Daemon daemon(testing::FreshStore("backpressure"),
                         {"--workers", "1", "--max-queue", "2", "--retry-after-seconds", "3"});
  REQUIRE(daemon.port() > 0);
  std::vector<std::string> accepted;
  int refused = 0;
  for (int i = 0; i < 20; ++i) {
    const testing::HttpReply reply =
        Request(daemon.port(), "POST", "/v1/fits", DecayRequest(i % 3, 48), "application/json");
    if (reply.status == 202) {
      accepted.push_back(json::parse(reply.body)["id"]);
    } else {
      CHECK(reply.status == 429);
      CHECK(reply.Header("Retry-After") == "3");
      ++refused;
    }
  }
  CHECK(refused > 0);
  CHECK(accepted.size() >= 2);
  CHECK(WaitAllDone(daemon.port(), accepted, std::chrono::seconds(60)));
}

TEST_CASE("Daemon: a client dribbling its headers is cut off, others are served", "[server]") {
  testing::Daemon daemon(testing::FreshStore("slow"), {"--header-timeout-seconds", "1"});
  REQUIRE(daemon.port() > 0);
  const int fd = socket(AF_INET, SOCK_STREAM, 0);
  REQUIRE(fd >= 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(static_cast<uint16_t>(daemon.port()));
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)) == 0);
  const std::string request = "GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Slow: aaaaaaaaaaaaaaa";
  const auto started = std::chrono::steady_clock::now();
  bool cut_off = false;
  for (size_t i = 0; i < request.size(); ++i) {
    if (send(fd, &request[i], 1, MSG_NOSIGNAL) != 1) {
      cut_off = true;
      break;
    }
    if (i == 5) CHECK(Request(daemon.port(), "GET", "/healthz").status == 200);
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
    char byte;
    const ssize_t got = recv(fd, &byte, 1, MSG_DONTWAIT);
    if (got == 0) {
      cut_off = true;
      break;
    }
  }
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  close(fd);
  CHECK(cut_off);
  CHECK(seconds < 3.0);
  CHECK(Request(daemon.port(), "GET", "/healthz").status == 200);
}

TEST_CASE("Daemon: SIGTERM during work exits 0 within the grace period; a restart finishes",
          "[server]") {
  const std::string store = testing::FreshStore("sigterm");
  std::vector<std::string> ids;
  {
    testing::Daemon daemon(store, {"--workers", "1", "--shutdown-grace-seconds", "2"});
    REQUIRE(daemon.port() > 0);
    for (int i = 0; i < 12; ++i) {
      const testing::HttpReply reply =
          Request(daemon.port(), "POST", "/v1/fits", DecayRequest(i % 4, 64), "application/json");
      REQUIRE(reply.status == 202);
      ids.push_back(json::parse(reply.body)["id"]);
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(200));
    const auto signalled = std::chrono::steady_clock::now();
    daemon.Signal(SIGTERM);
    CHECK(daemon.WaitExit(std::chrono::seconds(6)) == 0);
    CHECK(std::chrono::steady_clock::now() - signalled < std::chrono::seconds(5));
  }
  testing::Daemon restarted(store, {"--workers", "2"});
  REQUIRE(restarted.port() > 0);
  CHECK(WaitAllDone(restarted.port(), ids, std::chrono::seconds(90)));
}

TEST_CASE("Daemon: DELETE stops a running fit at its next iteration and it ends cancelled",
          "[server]") {
  testing::Daemon daemon(testing::FreshStore("cancel"), {"--workers", "1"});
  REQUIRE(daemon.port() > 0);
  // An expression fit on many points: long enough to be caught running.
  std::string x, y;
  for (int i = 0; i < 5000; ++i) {
    const double t = i * 0.01;
    x += (i ? "," : "") + std::to_string(t);
    y += (i ? "," : "") +
         std::to_string(3 * std::exp(-t / 7) + 0.5 * std::sin(9 * t) + 0.01 * std::sin(1234.5 * i));
  }
  const std::string body =
      R"J({"model": {"expression": "a*exp(-x/t)+c*sin(w*x)", "parameters": ["a", "t", "c", "w"]},
          "data": {"x": [)J" +
      x + "], \"y\": [" + y + "]}}";
  const testing::HttpReply accepted =
      Request(daemon.port(), "POST", "/v1/fits", body, "application/json");
  REQUIRE(accepted.status == 202);
  const std::string id = json::parse(accepted.body)["id"];
  std::string state;
  for (int i = 0; i < 400 && state != "running"; ++i) {
    state = json::parse(Request(daemon.port(), "GET", "/v1/fits/" + id).body)["state"];
    if (state != "running") std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  REQUIRE(state == "running");
  const testing::HttpReply cancel = Request(daemon.port(), "DELETE", "/v1/fits/" + id);
  CHECK(cancel.status == 202);
  const auto asked = std::chrono::steady_clock::now();
  for (int i = 0; i < 400 && state == "running"; ++i) {
    state = json::parse(Request(daemon.port(), "GET", "/v1/fits/" + id).body)["state"];
    if (state == "running") std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  CHECK(state == "cancelled");
  CHECK(std::chrono::steady_clock::now() - asked < std::chrono::seconds(2));
  CHECK(Request(daemon.port(), "DELETE", "/v1/fits/" + id).status == 409);
}

}  // namespace foothold
