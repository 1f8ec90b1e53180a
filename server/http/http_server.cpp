#include "server/http/http_server.h"

#include <boost/asio/post.hpp>
#include <boost/asio/strand.hpp>
#include <boost/asio/write.hpp>

#include "server/http/connection.h"

namespace foothold {
namespace asio = boost::asio;
using tcp = asio::ip::tcp;

HttpServer::HttpServer(const HttpServerOptions& options, const Router* router,
                       const ServiceLimits& limits, Metrics* metrics, RequestLog* log)
    : options_(options),
      router_(router),
      limits_(limits),
      metrics_(metrics),
      log_(log),
      acceptor_(io_),
      handlers_(static_cast<size_t>(std::max(1, options.num_handler_threads))) {}

HttpServer::~HttpServer() { Stop(); }

bool HttpServer::Start(std::string* error) {
  boost::system::error_code code;
  const asio::ip::address address = asio::ip::make_address(options_.listen_address, code);
  if (code) {
    *error = "listen = '" + options_.listen_address + "': not an IP address";
    return false;
  }
  const tcp::endpoint endpoint(address, static_cast<unsigned short>(options_.port));
  acceptor_.open(endpoint.protocol(), code);
  if (!code) acceptor_.set_option(asio::socket_base::reuse_address(true), code);
  if (!code) acceptor_.bind(endpoint, code);
  if (!code) acceptor_.listen(asio::socket_base::max_listen_connections, code);
  if (code) {
    *error = "cannot listen on " + options_.listen_address + ":" + std::to_string(options_.port) +
             ": " + code.message();
    return false;
  }
  bound_port_ = acceptor_.local_endpoint().port();
  bound_address_ = acceptor_.local_endpoint().address().to_string();
  DoAccept();
  for (int i = 0; i < std::max(1, options_.num_io_threads); ++i) {
    threads_.emplace_back([this] { io_.run(); });
  }
  return true;
}

void HttpServer::DoAccept() {
  acceptor_.async_accept(
      asio::make_strand(io_), [this](boost::system::error_code code, tcp::socket socket) {
        if (code) {
          if (acceptor_.is_open()) DoAccept();
          return;
        }
        if (registry_.Count() >= limits_.max_connections) {
          // Past the limit: a short answer, written while the kernel buffer certainly has room.
          static const std::string kBody =
              "{\"type\":\"https://foothold.dev/problems/too-many-connections\",\"title\":"
              "\"Service Unavailable\",\"status\":503,\"detail\":\"max_connections reached\"}";
          static const std::string kRefusal =
              "HTTP/1.1 503 Service Unavailable\r\nContent-Type: application/problem+json\r\n"
              "Retry-After: 1\r\nConnection: close\r\nContent-Length: " +
              std::to_string(kBody.size()) + "\r\n\r\n" + kBody;
          boost::system::error_code ignored;
          asio::write(socket, asio::buffer(kRefusal), ignored);
          socket.shutdown(tcp::socket::shutdown_both, ignored);
          socket.close(ignored);
        } else {
          auto connection = std::make_shared<Connection>(std::move(socket), &registry_, router_,
                                                         &handlers_, limits_, metrics_, log_);
          registry_.Add(connection);
          connection->Start();
        }
        DoAccept();
      });
}

void HttpServer::StopAccepting() {
  asio::post(io_, [this] {
    boost::system::error_code ignored;
    acceptor_.close(ignored);
  });
}

void HttpServer::Stop() {
  if (is_stopped_.exchange(true)) return;
  StopAccepting();
  registry_.StopAll();
  handlers_.join();
  io_.stop();
  for (std::thread& thread : threads_) thread.join();
  threads_.clear();
}

}  // namespace foothold
