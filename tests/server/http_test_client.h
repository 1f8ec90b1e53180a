#pragma once
// Test helpers, header-only: a tiny synchronous HTTP client on Beast and a daemon started
// as a child process (`foothold serve --port 0`) whose printed port the tests read.

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <boost/asio/connect.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>
#include <chrono>
#include <cstdio>
#include <string>
#include <thread>
#include <vector>

namespace foothold {
namespace testing {

struct HttpReply {
  int status = 0;
  std::string body;
  std::string content_type;
  boost::beast::http::response<boost::beast::http::string_body> message;
  std::string Header(const std::string& name) const { return std::string(message[name]); }
};

// One request on a fresh loopback connection; status 0 when the connection failed.
inline HttpReply Request(int port, const std::string& method, const std::string& target,
                         const std::string& body = "", const std::string& content_type = "",
                         const std::vector<std::pair<std::string, std::string>>& headers = {}) {
  namespace beast = boost::beast;
  namespace http = beast::http;
  boost::asio::io_context io;
  beast::tcp_stream stream(io);
  HttpReply reply;
  beast::error_code error;
  stream.expires_after(std::chrono::seconds(60));
  stream.connect(boost::asio::ip::tcp::endpoint(boost::asio::ip::make_address("127.0.0.1"),
                                                static_cast<unsigned short>(port)),
                 error);
  if (error) return reply;
  http::request<http::string_body> request(http::string_to_verb(method), target, 11);
  request.set(http::field::host, "127.0.0.1");
  if (!content_type.empty()) request.set(http::field::content_type, content_type);
  for (const auto& [name, value] : headers) request.set(name, value);
  request.body() = body;
  request.prepare_payload();
  http::write(stream, request, error);
  if (error) return reply;
  beast::flat_buffer buffer;
  http::response_parser<http::string_body> parser;
  parser.body_limit(1u << 30);
  http::read(stream, buffer, parser, error);
  if (error) return reply;
  reply.message = parser.release();
  reply.status = static_cast<int>(reply.message.result_int());
  reply.body = reply.message.body();
  reply.content_type = std::string(reply.message[http::field::content_type]);
  return reply;
}

// `foothold serve` as a child process on a free loopback port.
class Daemon {
 public:
  Daemon(const std::string& store, const std::vector<std::string>& extra_args = {}) {
    int pipe_fds[2];
    if (pipe(pipe_fds) != 0) return;
    pid_ = fork();
    if (pid_ == 0) {
      dup2(pipe_fds[1], 1);
      close(pipe_fds[0]);
      const std::string log = store + ".log";
      FILE* err = std::fopen(log.c_str(), "a");
      if (err) dup2(fileno(err), 2);
      std::vector<std::string> args = {
          FOOTHOLD_BINARY_DIR "/server/foothold", "serve", "--port", "0", "--store", store};
      args.insert(args.end(), extra_args.begin(), extra_args.end());
      std::vector<char*> argv;
      for (std::string& arg : args) argv.push_back(&arg[0]);
      argv.push_back(nullptr);
      execv(argv[0], argv.data());
      _exit(127);
    }
    close(pipe_fds[1]);
    // The first stdout line names the port; bounded by the pipe closing.
    std::string line;
    char c;
    while (read(pipe_fds[0], &c, 1) == 1 && c != '\n') line += c;
    stdout_fd_ = pipe_fds[0];
    const size_t colon = line.rfind(':');
    if (colon != std::string::npos) port_ = std::atoi(line.c_str() + colon + 1);
  }
  ~Daemon() {
    if (pid_ > 0 && !exited_) {
      kill(pid_, SIGKILL);
      waitpid(pid_, nullptr, 0);
    }
    if (stdout_fd_ >= 0) close(stdout_fd_);
  }
  int port() const { return port_; }
  pid_t pid() const { return pid_; }
  void Signal(int signal_number) { kill(pid_, signal_number); }
  // Waits up to timeout for the exit; the exit status, or -1 on timeout, -2 when killed.
  int WaitExit(std::chrono::milliseconds timeout) {
    const auto until = std::chrono::steady_clock::now() + timeout;
    while (std::chrono::steady_clock::now() < until) {
      int status = 0;
      if (waitpid(pid_, &status, WNOHANG) == pid_) {
        exited_ = true;
        return WIFEXITED(status) ? WEXITSTATUS(status) : -2;
      }
      std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
    return -1;
  }

 private:
  pid_t pid_ = -1;
  int port_ = 0;
  int stdout_fd_ = -1;
  bool exited_ = false;
};

inline std::string FreshStore(const std::string& name) {
  const std::string path = std::string(FOOTHOLD_BINARY_DIR) + "/daemon_test_" + name + ".db";
  for (const char* suffix : {"", "-wal", "-shm", ".log"}) std::remove((path + suffix).c_str());
  return path;
}

}  // namespace testing
}  // namespace foothold
