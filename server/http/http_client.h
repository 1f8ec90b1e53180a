#pragma once
// A small synchronous HTTP/1.1 client on Beast for the client commands (`foothold submit`,
// `status`, `wait`, `result`) and the daemon bench. One connection, kept alive between
// requests and reopened once when the daemon has closed an idle one.

#include <boost/asio/io_context.hpp>
#include <boost/beast/core/tcp_stream.hpp>
#include <string>
#include <utility>
#include <vector>

namespace foothold {

// Where the daemon listens: "http://HOST:PORT" (the port defaults to 80, a trailing "/"
// is allowed, no path, no https).
struct DaemonUrl {
  std::string host;
  std::string port;

  // False with "--url 'x': ..." naming what is wrong.
  static bool Parse(const std::string& text, DaemonUrl* out, std::string* error);
  std::string ToString() const { return "http://" + host + ":" + port; }
};

struct HttpClientReply {
  int status = 0;
  std::string body;
  std::string content_type;
  std::string retry_after;  // the Retry-After header, when the daemon sent one
};

class HttpClient {
 public:
  // `token` empty: no Authorization header. `timeout_seconds` bounds connect, write and
  // read of each request.
  HttpClient(DaemonUrl url, std::string token, double timeout_seconds);
  ~HttpClient();
  HttpClient(const HttpClient&) = delete;
  HttpClient& operator=(const HttpClient&) = delete;

  // Sends one request and reads the whole answer. False when no answer came (connection
  // refused, reset, timeout) with a message naming the URL; an HTTP error status is an
  // answer, not a failure.
  bool Send(const std::string& method, const std::string& target, const std::string& body,
            const std::vector<std::pair<std::string, std::string>>& headers, HttpClientReply* reply,
            std::string* error);

  const DaemonUrl& url() const { return url_; }

 private:
  bool Connect(std::string* error);
  bool SendOnce(const std::string& method, const std::string& target, const std::string& body,
                const std::vector<std::pair<std::string, std::string>>& headers,
                HttpClientReply* reply, bool* is_stale, std::string* error);
  void Close();

  DaemonUrl url_;
  std::string token_;
  double timeout_seconds_;
  boost::asio::io_context io_;
  boost::beast::tcp_stream stream_;
  bool is_connected_ = false;
};

}  // namespace foothold
