#pragma once
// One client connection: read a request (headers within the header timeout, the body
// within the body timeout, both within the size limits), hand it to the router on the
// handler pool, write the answer, repeat while the client keeps the connection alive.

#include <boost/asio/steady_timer.hpp>
#include <boost/asio/thread_pool.hpp>
#include <boost/beast/core.hpp>
#include <boost/beast/http.hpp>
#include <chrono>
#include <memory>
#include <optional>
#include <vector>

#include "server/http/http_types.h"
#include "server/http/request_log.h"
#include "server/http/router.h"
#include "server/http/service_limits.h"

namespace foothold {

class ConnectionRegistry;

class Connection : public std::enable_shared_from_this<Connection> {
 public:
  Connection(boost::asio::ip::tcp::socket socket, ConnectionRegistry* registry,
             const Router* router, boost::asio::thread_pool* handlers, const ServiceLimits& limits,
             Metrics* metrics, RequestLog* log);

  void Start();
  // Closes the socket from any thread; pending operations end with an error.
  void Stop();

 private:
  void DoRead();
  void OnHeader(boost::beast::error_code error);
  void OnRead(boost::beast::error_code error);
  void Respond(RouteReply reply);
  void PollWait();
  void DoWrite(HttpResponse response, const std::string& route, const std::string& job_id);
  void OnWrite(boost::beast::error_code error, bool keep_alive);
  // A problem for a request that could not be read (too large, malformed), then close.
  void RefuseRequest(int status, const std::string& slug, const std::string& title,
                     const std::string& detail);
  void Drain();
  void Close();

  boost::beast::tcp_stream stream_;
  boost::beast::flat_buffer buffer_;
  std::optional<boost::beast::http::request_parser<boost::beast::http::string_body>> parser_;
  HttpRequest request_;
  std::shared_ptr<HttpResponse> response_;
  ConnectionRegistry* registry_;
  const Router* router_;
  boost::asio::thread_pool* handlers_;
  ServiceLimits limits_;
  Metrics* metrics_;
  RequestLog* log_;
  boost::asio::steady_timer wait_timer_;
  std::chrono::steady_clock::time_point request_started_;
  std::chrono::steady_clock::time_point wait_until_;
  std::chrono::milliseconds wait_poll_interval_{0};  // the next poll's delay, doubling
  std::string wait_job_id_;
  std::string wait_route_;
  bool is_refusing_ = false;
  std::vector<char> drain_buffer_;
};

}  // namespace foothold
