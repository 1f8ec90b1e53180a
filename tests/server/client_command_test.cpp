// The client commands (submit, status, wait, result) against a real daemon on loopback:
// the result they fetch is the one `foothold fit` computes locally, daemon errors and a
// missing daemon are one clear line with exit 2, and a token file authorizes.
#include "server/client_command.h"

#include <boost/asio/ip/tcp.hpp>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

#include "server/cli.h"
#include "tests/server/http_test_client.h"
#include "tests/server/result_compare.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::StripTimings;

struct CliRun {
  int code = -1;
  std::string out;
  std::string err;
};

CliRun Cli(const std::vector<std::string>& args) {
  std::ostringstream out, err;
  CliRun run;
  run.code = RunCli(args, out, err);
  run.out = out.str();
  run.err = err.str();
  return run;
}

// `foothold fit` as the daemon's own binary runs it (the test executable may link a newer
// engine than the daemon's binary while the tree is being rebuilt).
CliRun BinaryFit(const std::vector<std::string>& args) {
  std::string command = std::string(FOOTHOLD_BINARY_DIR) + "/server/foothold fit";
  for (const std::string& arg : args) command += " '" + arg + "'";
  FILE* pipe = popen(command.c_str(), "r");
  CliRun run;
  if (!pipe) return run;
  char buffer[4096];
  size_t got;
  while ((got = fread(buffer, 1, sizeof(buffer), pipe)) > 0) run.out.append(buffer, got);
  const int status = pclose(pipe);
  run.code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return run;
}

std::string Url(int port) { return "http://127.0.0.1:" + std::to_string(port); }

// A noisy gaussian peak, deterministic (a fixed sine pattern stands in for noise).
std::string WriteGaussianCsv(const std::string& name) {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/client_" + name + ".csv";
  std::ofstream csv(path);
  csv << "x,y\n";
  for (int i = 0; i < 60; ++i) {
    const double x = i * 0.25;
    const double y = 8.0 * std::exp(-(x - 7.0) * (x - 7.0) / (2 * 1.5 * 1.5)) + 0.5 +
                     0.05 * std::sin(12.9898 * i);
    csv << x << ',' << y << '\n';
  }
  return path;
}

std::string Replace(std::string text, const std::string& from, const std::string& to) {
  for (size_t at = text.find(from); at != std::string::npos; at = text.find(from, at + to.size())) {
    text.replace(at, from.size(), to);
  }
  return text;
}

// A loopback port nothing listens on: bound, read and released.
int ClosedPort() {
  boost::asio::io_context io;
  boost::asio::ip::tcp::acceptor acceptor(io, {boost::asio::ip::make_address("127.0.0.1"), 0});
  const int port = acceptor.local_endpoint().port();
  acceptor.close();
  return port;
}

testing::Daemon& SharedDaemon() {
  static testing::Daemon daemon(testing::FreshStore("client"), {"--workers", "1"});
  return daemon;
}

}  // namespace

TEST_CASE("Client: submit, wait and result give what foothold fit gives", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const std::string data = WriteGaussianCsv("peak");
  const std::vector<std::string> fit_flags = {data, "--family", "gaussian", "--seed", "5"};

  std::vector<std::string> submit = {"submit"};
  submit.insert(submit.end(), fit_flags.begin(), fit_flags.end());
  submit.insert(submit.end(), {"--url", Url(port), "--label", "client-peak"});
  const CliRun submitted = Cli(submit);
  REQUIRE(submitted.code == kExitOk);
  REQUIRE(submitted.err.empty());
  const std::string id = submitted.out.substr(0, submitted.out.find('\n'));
  CHECK(submitted.out == id + "\n");

  const CliRun waited = Cli({"wait", id, "--url", Url(port), "--timeout", "120"});
  REQUIRE(waited.code == kExitOk);
  CHECK(waited.out.find(id + "  done  ") == 0);
  CHECK(waited.out.find("label client-peak") != std::string::npos);

  const CliRun result_json = Cli({"result", id, "--json", "--url", Url(port)});
  REQUIRE(result_json.code == kExitOk);
  std::vector<std::string> fit = fit_flags;
  fit.insert(fit.end(), {"--label", "client-peak"});
  std::vector<std::string> fit_json = fit;
  fit_json.push_back("--json");
  const CliRun local_json = BinaryFit(fit_json);
  REQUIRE(local_json.code == kExitOk);
  json from_daemon = json::parse(result_json.out);
  json from_fit = json::parse(local_json.out);
  StripTimings(&from_daemon);
  StripTimings(&from_fit);
  CHECK(from_daemon == from_fit);

  // The report is the fit's, word for word, with the job named where the file was.
  const CliRun report = Cli({"result", id, "--url", Url(port)});
  REQUIRE(report.code == kExitOk);
  const CliRun local_report = BinaryFit(fit);
  CHECK(report.out == Replace(local_report.out, data, "job " + id));
  CHECK(report.out.find("parameter") != std::string::npos);

  // FOOTHOLD_URL stands in for --url.
  setenv("FOOTHOLD_URL", Url(port).c_str(), 1);
  const CliRun status = Cli({"status", id});
  unsetenv("FOOTHOLD_URL");
  CHECK(status.code == kExitOk);
  CHECK(status.out == waited.out);
}

TEST_CASE("Client: submit --wait prints the result", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const std::string data = WriteGaussianCsv("wait");
  const CliRun run =
      Cli({"submit", data, "--family", "gaussian", "--url", Url(port), "--wait", "60", "--json"});
  REQUIRE(run.code == kExitOk);
  const json result = json::parse(run.out);
  CHECK(result["model"]["family"] == "gaussian");
  CHECK(result["best"]["converged"] == true);
}

TEST_CASE("Client: an unknown id is exit 2 with the daemon's detail naming it", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  for (const std::string command : {"status", "wait", "result"}) {
    const CliRun run = Cli({command, "f00000000000dead", "--url", Url(port)});
    CHECK(run.code == kExitBadInput);
    CHECK(run.out.empty());
    CHECK(run.err == "foothold: " + command +
                         ": fit 'f00000000000dead': no such job (it may have been purged) "
                         "(HTTP 404 Not Found)\n");
  }
  const CliRun bad = Cli({"status", "../healthz", "--url", Url(port)});
  CHECK(bad.code == kExitBadInput);
  CHECK(bad.err.find("ID '../healthz': expected a job id") != std::string::npos);
}

TEST_CASE("Client: a job not finished in time is exit 4, a cancelled one exit 5", "[server]") {
  const int port = SharedDaemon().port();
  REQUIRE(port > 0);
  const std::string data = WriteGaussianCsv("slow");
  // Enough starts that the one worker is still busy when the single poll arrives.
  const CliRun submitted =
      Cli({"submit", data, "--family", "gaussian", "--starts", "1000", "--url", Url(port)});
  REQUIRE(submitted.code == kExitOk);
  const std::string id = submitted.out.substr(0, submitted.out.find('\n'));
  const CliRun early = Cli({"wait", id, "--timeout", "0", "--url", Url(port)});
  CHECK(early.code == kExitNotFinished);
  CHECK(early.err.find("foothold: wait: job " + id + " is ") == 0);
  CHECK(Cli({"result", id, "--url", Url(port)}).code == kExitNotFinished);

  REQUIRE(testing::Request(port, "DELETE", "/v1/fits/" + id).status / 100 == 2);
  const CliRun cancelled = Cli({"wait", id, "--timeout", "60", "--url", Url(port)});
  CHECK(cancelled.code == kExitJobFailed);
  CHECK(cancelled.out.find(id + "  cancelled") == 0);
}

TEST_CASE("Client: a token file authorizes; without it the 401 detail is shown", "[server]") {
  const std::string tokens = std::string(FOOTHOLD_BINARY_DIR) + "/client_tokens.txt";
  std::ofstream(tokens) << "# client test\nclient-secret-1\n";
  testing::Daemon daemon(testing::FreshStore("client_auth"), {"--token-file", tokens});
  REQUIRE(daemon.port() > 0);
  const std::string data = WriteGaussianCsv("auth");
  const std::vector<std::string> submit = {"submit",   data,    "--family",
                                           "gaussian", "--url", Url(daemon.port())};
  const CliRun refused = Cli(submit);
  CHECK(refused.code == kExitBadInput);
  CHECK(refused.err ==
        "foothold: submit: this resource needs an Authorization: Bearer <token> header "
        "(HTTP 401 Unauthorized)\n");

  std::vector<std::string> with_token = submit;
  with_token.insert(with_token.end(), {"--token-file", tokens, "--wait", "60"});
  const CliRun accepted = Cli(with_token);
  CHECK(accepted.code == kExitOk);
  CHECK(accepted.out.find("verdict:") != std::string::npos);

  const std::string wrong = std::string(FOOTHOLD_BINARY_DIR) + "/client_wrong_token.txt";
  std::ofstream(wrong) << "not-the-token\n";
  std::vector<std::string> wrong_token = submit;
  wrong_token.insert(wrong_token.end(), {"--token-file", wrong});
  CHECK(Cli(wrong_token).err.find("the bearer token is not valid (HTTP 401") != std::string::npos);
}

TEST_CASE("Client: no daemon, a bad URL and bad flags are one line with exit 2", "[server]") {
  const int port = ClosedPort();
  const CliRun refused = Cli({"status", "f0123456789abcdef", "--url", Url(port)});
  CHECK(refused.code == kExitBadInput);
  CHECK(refused.err.find("foothold: status: cannot connect to " + Url(port) +
                         ": Connection refused (is `foothold serve` running there?") == 0);

  const CliRun https = Cli({"status", "f1", "--url", "https://127.0.0.1:1"});
  CHECK(https.err ==
        "foothold: status: --url 'https://127.0.0.1:1': https is not supported; "
        "use http://HOST:PORT\n");
  CHECK(Cli({"status", "f1", "--url", "http://127.0.0.1:99999"}).err.find("port '99999'") !=
        std::string::npos);
  const CliRun no_id = Cli({"wait"});
  CHECK(no_id.code == kExitBadInput);
  CHECK(no_id.err == "foothold: wait: missing the job ID (see foothold wait --help)\n");
  CHECK(Cli({"wait", "f1", "--timeout", "soon"}).err ==
        "foothold: wait: --timeout 'soon': expected a number of seconds >= 0\n");
  CHECK(Cli({"submit", "--family", "gaussian"}).err.find("foothold: submit: no data") == 0);
  CHECK(Cli({"submit", "--help"}).out.find("usage: foothold submit") == 0);
}

}  // namespace foothold
