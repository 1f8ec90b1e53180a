#pragma once
// The acceptor and the I/O threads: accepts loopback (or configured) connections, refuses
// those past the connection limit, and stops accepting on request.

#include <atomic>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/thread_pool.hpp>
#include <string>
#include <thread>
#include <vector>

#include "server/http/connection_registry.h"
#include "server/http/request_log.h"
#include "server/http/router.h"

namespace foothold {

struct HttpServerOptions {
  std::string listen_address = "127.0.0.1";
  int port = 8470;  // 0 picks a free port
  int num_io_threads = 2;
  int num_handler_threads = 2;
};

class HttpServer {
 public:
  HttpServer(const HttpServerOptions& options, const Router* router, const ServiceLimits& limits,
             Metrics* metrics, RequestLog* log);
  ~HttpServer();

  // Binds and starts accepting on the I/O threads; false with a message on failure.
  bool Start(std::string* error);
  int BoundPort() const { return bound_port_; }
  std::string BoundAddress() const { return bound_address_; }
  // Stops accepting new connections; open ones are served on.
  void StopAccepting();
  // Closes every connection and joins the threads.
  void Stop();
  int NumConnections() const { return registry_.Count(); }

 private:
  void DoAccept();

  HttpServerOptions options_;
  const Router* router_;
  ServiceLimits limits_;
  Metrics* metrics_;
  RequestLog* log_;
  boost::asio::io_context io_;
  boost::asio::ip::tcp::acceptor acceptor_;
  boost::asio::thread_pool handlers_;
  ConnectionRegistry registry_;
  std::vector<std::thread> threads_;
  int bound_port_ = 0;
  std::string bound_address_;
  std::atomic<bool> is_stopped_{false};
};

}  // namespace foothold
