#include "server/demo_command.h"

#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <boost/asio/ip/tcp.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <sstream>
#include <thread>

#include "server/fit_flags.h"
#include "server/json_codec.h"

extern char** environ;

namespace foothold {
namespace {

namespace beast = boost::beast;
namespace http = beast::http;

constexpr const char* kDemoUsage = R"TEXT(usage: foothold demo [--examples DIR] [--workers N]

Starts `foothold serve` on a free loopback port with a temporary store, posts every
dataset listed in DIR/manifest.tsv (default docs/examples), waits for the fits and prints
one table: dataset, model, key parameters with standard errors, basins, verdict.
Exit status 0 when every fit converged, 1 otherwise, 2 on bad input.
)TEXT";

// How long the demo waits for all fits.
constexpr std::chrono::seconds kDemoTimeout{300};

struct Reply {
  int status = 0;
  std::string body;
};

Reply Send(int port, http::verb method, const std::string& target, const std::string& body) {
  boost::asio::io_context io;
  beast::tcp_stream stream(io);
  Reply reply;
  beast::error_code error;
  stream.expires_after(std::chrono::seconds(120));
  stream.connect({boost::asio::ip::make_address("127.0.0.1"), static_cast<unsigned short>(port)},
                 error);
  if (error) return reply;
  http::request<http::string_body> request(method, target, 11);
  request.set(http::field::host, "127.0.0.1");
  if (!body.empty()) request.set(http::field::content_type, "application/json");
  request.body() = body;
  request.prepare_payload();
  http::write(stream, request, error);
  beast::flat_buffer buffer;
  http::response<http::string_body> response;
  if (!error) http::read(stream, buffer, response, error);
  if (error) return reply;
  reply.status = static_cast<int>(response.result_int());
  reply.body = response.body();
  return reply;
}

struct DemoEntry {
  std::string file;
  std::string model;
  std::string request_json;
  std::string id;
  Json job;
};

std::vector<std::string> SplitTabs(const std::string& line) {
  std::vector<std::string> fields;
  std::stringstream in(line);
  std::string field;
  while (std::getline(in, field, '\t')) fields.push_back(field);
  return fields;
}

// The same `foothold fit` words scripts/demo.sh builds from a manifest line.
bool ReadManifest(const std::string& dir, std::vector<DemoEntry>* entries, std::string* error) {
  std::ifstream in(dir + "/manifest.tsv");
  if (!in) {
    *error = "demo: cannot read " + dir + "/manifest.tsv";
    return false;
  }
  std::string line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#' || line.rfind("file\t", 0) == 0) continue;
    const std::vector<std::string> f = SplitTabs(line);
    if (f.size() < 8) {
      *error = "demo: manifest line '" + line + "': expected 9 tab-separated fields";
      return false;
    }
    std::vector<std::string> args = {dir + "/" + f[0]};
    if (f[1] != "-") {
      args.insert(args.end(), {"--family", f[1]});
      if (f[2] != "-") args.insert(args.end(), {"--peaks", f[2]});
    } else {
      args.insert(args.end(), {"--expr", f[3], "--params", f[4]});
    }
    if (f[5] != "-") args.insert(args.end(), {"--start", f[5]});
    if (f[6] != "-") args.insert(args.end(), {"--bounds", f[6]});
    if (f[7] != "-") args.insert(args.end(), {"--sigma-column", f[7]});
    FitCommand command;
    if (!ParseFitArguments(args, &command, error)) {
      *error = "demo: " + f[0] + ": " + *error;
      return false;
    }
    command.request.label = f[0];
    DemoEntry entry;
    entry.file = f[0];
    entry.model = f[1] != "-" ? f[1] : "expression";
    entry.request_json = EncodeFitRequest(command.request).dump();
    entries->push_back(std::move(entry));
  }
  return true;
}

std::string KeyParameters(const Json& result) {
  std::ostringstream out;
  int shown = 0;
  if (!result.contains("best") || !result["best"].contains("parameters")) return "-";
  for (auto it = result["best"]["parameters"].begin();
       it != result["best"]["parameters"].end() && shown < 3; ++it, ++shown) {
    out << (shown ? ", " : "") << it.key() << "=" << std::setprecision(4);
    const Json& p = it.value();
    if (p["value"].is_number())
      out << p["value"].get<double>();
    else
      out << "?";
    if (p.contains("stderr") && p["stderr"].is_number()) {
      out << "±" << std::setprecision(2) << p["stderr"].get<double>();
    }
  }
  return out.str();
}

}  // namespace

int RunDemo(const std::vector<std::string>& args, std::ostream& out, std::ostream& err) {
  std::string examples = "docs/examples";
  std::string workers = "2";
  for (size_t i = 0; i < args.size(); ++i) {
    if (args[i] == "--help" || args[i] == "-h") {
      out << kDemoUsage;
      return 0;
    }
    if ((args[i] == "--examples" || args[i] == "--workers") && i + 1 < args.size()) {
      (args[i] == "--examples" ? examples : workers) = args[i + 1];
      ++i;
      continue;
    }
    err << "foothold: demo: unexpected argument '" << args[i] << "' (see foothold demo --help)\n";
    return 2;
  }
  std::vector<DemoEntry> entries;
  std::string error;
  if (!ReadManifest(examples, &entries, &error)) {
    err << "foothold: " << error << '\n';
    return 2;
  }
  char dir_template[] = "/tmp/foothold-demo-XXXXXX";
  if (!mkdtemp(dir_template)) {
    err << "foothold: demo: cannot create a temporary directory\n";
    return 2;
  }
  const std::string store = std::string(dir_template) + "/demo.db";
  const std::string log = std::string(dir_template) + "/daemon.log";
  int pipe_fds[2];
  if (pipe(pipe_fds) != 0) return 2;
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, pipe_fds[1], 1);
  posix_spawn_file_actions_addclose(&actions, pipe_fds[0]);
  posix_spawn_file_actions_addopen(&actions, 2, log.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
  std::vector<std::string> words = {"/proc/self/exe", "serve", "--port",    "0",
                                    "--store",        store,   "--workers", workers};
  std::vector<char*> argv;
  for (std::string& word : words) argv.push_back(&word[0]);
  argv.push_back(nullptr);
  pid_t pid = 0;
  const int spawned = posix_spawn(&pid, "/proc/self/exe", &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  close(pipe_fds[1]);
  if (spawned != 0) {
    err << "foothold: demo: cannot start the daemon\n";
    return 2;
  }
  std::string line;
  char c;
  while (read(pipe_fds[0], &c, 1) == 1 && c != '\n') line += c;
  close(pipe_fds[0]);
  const int port = std::atoi(line.substr(line.rfind(':') + 1).c_str());
  err << "demo: daemon on port " << port << ", store " << store << '\n';

  int exit_code = 0;
  for (DemoEntry& entry : entries) {
    const Reply reply = Send(port, http::verb::post, "/v1/fits", entry.request_json);
    if (reply.status != 202 && reply.status != 200) {
      err << "demo: " << entry.file << ": HTTP " << reply.status << ": " << reply.body << '\n';
      exit_code = 1;
      continue;
    }
    entry.id = Json::parse(reply.body)["id"];
  }
  const auto until = std::chrono::steady_clock::now() + kDemoTimeout;
  for (DemoEntry& entry : entries) {
    while (!entry.id.empty() && std::chrono::steady_clock::now() < until) {
      const Reply reply = Send(port, http::verb::get, "/v1/fits/" + entry.id, "");
      entry.job = Json::parse(reply.body, nullptr, false);
      const std::string state = entry.job.is_object() ? entry.job.value("state", "") : "";
      if (state == "done" || state == "failed" || state == "cancelled") break;
      std::this_thread::sleep_for(std::chrono::milliseconds(100));
    }
  }
  kill(pid, SIGTERM);
  waitpid(pid, nullptr, 0);

  out << std::left << std::setw(26) << "dataset" << std::setw(13) << "model" << std::setw(64)
      << "key parameters (± standard error)" << std::setw(8) << "basins"
      << "verdict\n";
  for (const DemoEntry& entry : entries) {
    const Json& job = entry.job;
    std::string params = "-", basins = "-", verdict = "not run";
    if (job.is_object() && job.value("state", "") == "done" && job.contains("result")) {
      const Json& result = job["result"];
      params = KeyParameters(result);
      basins = std::to_string(result.contains("basins") ? result["basins"].size() : 0);
      verdict = result.contains("verdict") ? result["verdict"].value("summary", "") : "";
      if (result.contains("verdict") && result["verdict"].contains("flags")) {
        for (const Json& flag : result["verdict"]["flags"]) {
          if (flag == "not_converged") exit_code = 1;
        }
      }
    } else {
      if (job.is_object() && job.contains("error")) verdict = job["error"];
      exit_code = 1;
    }
    out << std::setw(26) << entry.file << std::setw(13) << entry.model << std::setw(64)
        << params + " " << std::setw(8) << basins << verdict << '\n';
  }
  return exit_code;
}

}  // namespace foothold
