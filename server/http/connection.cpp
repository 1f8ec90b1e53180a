#include "server/http/connection.h"

#include <algorithm>
#include <boost/asio/dispatch.hpp>
#include <boost/asio/post.hpp>

#include "server/http/connection_registry.h"
#include "server/http/problem_codec.h"

namespace foothold {
namespace asio = boost::asio;
namespace beast = boost::beast;
namespace http = beast::http;
namespace {

// How often a held Prefer: wait request looks at its job: first after kFirstWaitPoll, then
// at doubling intervals up to kWaitPollInterval, so that a small job is answered within a
// few milliseconds of finishing while a long one costs one store read per 25 ms.
constexpr std::chrono::milliseconds kFirstWaitPoll{1};
constexpr std::chrono::milliseconds kWaitPollInterval{25};
// How long a refused client may keep sending before the socket closes.
constexpr std::chrono::seconds kDrainTimeout{2};

std::chrono::steady_clock::duration Seconds(double seconds) {
  return std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(seconds));
}

}  // namespace

Connection::Connection(asio::ip::tcp::socket socket, ConnectionRegistry* registry,
                       const Router* router, asio::thread_pool* handlers,
                       const ServiceLimits& limits, Metrics* metrics, RequestLog* log)
    : stream_(std::move(socket)),
      registry_(registry),
      router_(router),
      handlers_(handlers),
      limits_(limits),
      metrics_(metrics),
      log_(log),
      wait_timer_(stream_.get_executor()) {}

void Connection::Start() {
  asio::dispatch(stream_.get_executor(), [self = shared_from_this()] { self->DoRead(); });
}

void Connection::Stop() {
  asio::post(stream_.get_executor(), [self = shared_from_this()] {
    beast::error_code ignored;
    self->wait_timer_.cancel();
    self->stream_.socket().shutdown(asio::ip::tcp::socket::shutdown_both, ignored);
    self->stream_.socket().close(ignored);
  });
}

void Connection::DoRead() {
  parser_.emplace();
  parser_->header_limit(static_cast<std::uint32_t>(limits_.max_header_bytes));
  parser_->body_limit(static_cast<std::uint64_t>(limits_.max_body_bytes));
  stream_.expires_after(Seconds(limits_.header_timeout_seconds));
  http::async_read_header(
      stream_, buffer_, *parser_,
      [self = shared_from_this()](beast::error_code error, size_t) { self->OnHeader(error); });
}

void Connection::OnHeader(beast::error_code error) {
  request_started_ = std::chrono::steady_clock::now();
  if (error == http::error::header_limit) {
    RefuseRequest(431, "headers-too-large", "Request Header Fields Too Large",
                  "the request headers exceed max_header_bytes = " +
                      std::to_string(limits_.max_header_bytes));
    return;
  }
  if (error == http::error::body_limit) {
    RefuseRequest(
        413, "body-too-large", "Content Too Large",
        "the request body exceeds max_body_bytes = " + std::to_string(limits_.max_body_bytes));
    return;
  }
  if (error) {
    // Timeouts, resets and the client closing: nothing to answer.
    if (error != beast::error::timeout && error != http::error::end_of_stream &&
        error != asio::error::operation_aborted && error != asio::error::connection_reset &&
        error != asio::error::eof && buffer_.size() > 0) {
      RefuseRequest(400, "malformed-http", "Bad Request",
                    "the request could not be parsed: " + error.message());
      return;
    }
    Close();
    return;
  }
  stream_.expires_after(Seconds(limits_.body_timeout_seconds));
  http::async_read(stream_, buffer_, *parser_,
                   [self = shared_from_this()](beast::error_code read_error, size_t) {
                     self->OnRead(read_error);
                   });
}

void Connection::OnRead(beast::error_code error) {
  if (error == http::error::body_limit) {
    RefuseRequest(
        413, "body-too-large", "Content Too Large",
        "the request body exceeds max_body_bytes = " + std::to_string(limits_.max_body_bytes));
    return;
  }
  if (error) {
    if (error != beast::error::timeout && error != asio::error::operation_aborted &&
        error != asio::error::connection_reset && error != asio::error::eof &&
        error != http::error::partial_message) {
      RefuseRequest(400, "malformed-http", "Bad Request",
                    "the request body could not be read: " + error.message());
      return;
    }
    Close();
    return;
  }
  stream_.expires_never();
  request_ = parser_->release();
  // The router may touch the store and run the guessers: never on an I/O thread.
  asio::post(*handlers_, [self = shared_from_this()] {
    RouteReply reply = self->router_->Handle(self->request_);
    asio::post(self->stream_.get_executor(),
               [self, reply = std::move(reply)]() mutable { self->Respond(std::move(reply)); });
  });
}

void Connection::Respond(RouteReply reply) {
  if (reply.wait_job_id.empty()) {
    DoWrite(std::move(reply.response), reply.route, reply.job_id);
    return;
  }
  wait_job_id_ = reply.wait_job_id;
  wait_route_ = reply.route;
  wait_until_ = std::chrono::steady_clock::now() + Seconds(reply.wait_seconds);
  wait_poll_interval_ = kFirstWaitPoll;
  PollWait();
}

void Connection::PollWait() {
  asio::post(*handlers_, [self = shared_from_this()] {
    const bool finished = self->router_->IsJobFinished(self->wait_job_id_);
    const bool expired = std::chrono::steady_clock::now() >= self->wait_until_;
    if (finished || expired) {
      HttpResponse response = self->router_->RenderJob(self->request_, self->wait_job_id_, true);
      asio::post(self->stream_.get_executor(), [self, response = std::move(response)]() mutable {
        self->DoWrite(std::move(response), self->wait_route_, self->wait_job_id_);
      });
      return;
    }
    asio::post(self->stream_.get_executor(), [self] {
      self->wait_timer_.expires_after(self->wait_poll_interval_);
      self->wait_poll_interval_ = std::min(kWaitPollInterval, 2 * self->wait_poll_interval_);
      self->wait_timer_.async_wait([self](beast::error_code error) {
        if (error) {
          self->Close();
          return;
        }
        self->PollWait();
      });
    });
  });
}

void Connection::DoWrite(HttpResponse response, const std::string& route,
                         const std::string& job_id) {
  const int status = static_cast<int>(response.result_int());
  const double latency_ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - request_started_)
          .count();
  if (metrics_) metrics_->CountRequest(std::string(request_.method_string()), route, status);
  if (log_) {
    log_->Request(std::string(request_.method_string()), std::string(request_.target()), status,
                  latency_ms, job_id);
  }
  response.keep_alive(request_.keep_alive());
  response_ = std::make_shared<HttpResponse>(std::move(response));
  const bool keep_alive = response_->keep_alive();
  stream_.expires_after(Seconds(limits_.body_timeout_seconds));
  http::async_write(stream_, *response_,
                    [self = shared_from_this(), keep_alive](beast::error_code error, size_t) {
                      self->OnWrite(error, keep_alive);
                    });
}

void Connection::OnWrite(beast::error_code error, bool keep_alive) {
  response_.reset();
  if (!error && is_refusing_) {
    Drain();
    return;
  }
  if (error || !keep_alive) {
    Close();
    return;
  }
  request_ = {};
  DoRead();
}

void Connection::RefuseRequest(int status, const std::string& slug, const std::string& title,
                               const std::string& detail) {
  request_ = {};
  if (parser_ && parser_->is_header_done()) {
    request_.method(parser_->get().method());
    request_.target(parser_->get().target());
  }
  request_.keep_alive(false);
  is_refusing_ = true;
  DoWrite(MakeProblem(11, status, slug, title, detail, std::string(request_.target())), "unread",
          "");
}

// After refusing a request whose body was not read, half-close and read what the client
// still sends (bounded in time), so the client sees the answer instead of a reset.
void Connection::Drain() {
  beast::error_code ignored;
  stream_.socket().shutdown(asio::ip::tcp::socket::shutdown_send, ignored);
  stream_.expires_after(kDrainTimeout);
  drain_buffer_.resize(16 << 10);
  stream_.async_read_some(asio::buffer(drain_buffer_),
                          [self = shared_from_this()](beast::error_code error, size_t) {
                            if (error) {
                              self->Close();
                              return;
                            }
                            self->Drain();
                          });
}

void Connection::Close() {
  beast::error_code ignored;
  stream_.socket().shutdown(asio::ip::tcp::socket::shutdown_both, ignored);
  stream_.socket().close(ignored);
  registry_->Remove(shared_from_this());
}

}  // namespace foothold
