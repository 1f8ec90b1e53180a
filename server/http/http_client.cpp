#include "server/http/http_client.h"

#include <boost/asio/connect.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/http.hpp>
#include <chrono>

namespace foothold {
namespace {

namespace beast = boost::beast;
namespace http = beast::http;
using boost::asio::ip::tcp;

// Result documents of large fits run to megabytes; the daemon caps what it sends anyway.
constexpr std::uint64_t kMaxReplyBytes = 256u << 20;

bool IsAllDigits(const std::string& text) {
  if (text.empty()) return false;
  for (char c : text) {
    if (c < '0' || c > '9') return false;
  }
  return true;
}

// A closed idle keep-alive connection shows as one of these on its next use.
bool IsStaleConnection(const beast::error_code& error) {
  return error == http::error::end_of_stream || error == boost::asio::error::connection_reset ||
         error == boost::asio::error::broken_pipe || error == boost::asio::error::eof;
}

}  // namespace

bool DaemonUrl::Parse(const std::string& text, DaemonUrl* out, std::string* error) {
  const std::string kScheme = "http://";
  auto fail = [&](const std::string& why) {
    *error = "--url '" + text + "': " + why;
    return false;
  };
  if (text.rfind("https://", 0) == 0) return fail("https is not supported; use http://HOST:PORT");
  if (text.rfind(kScheme, 0) != 0) return fail("expected http://HOST:PORT");
  std::string rest = text.substr(kScheme.size());
  if (!rest.empty() && rest.back() == '/') rest.pop_back();
  if (rest.find('/') != std::string::npos) return fail("expected no path after HOST:PORT");
  DaemonUrl url;
  const size_t colon = rest.rfind(':');
  if (colon == std::string::npos) {
    url.host = rest;
    url.port = "80";
  } else {
    url.host = rest.substr(0, colon);
    url.port = rest.substr(colon + 1);
    if (!IsAllDigits(url.port) || url.port.size() > 5 || std::stoi(url.port) == 0 ||
        std::stoi(url.port) > 65535) {
      return fail("port '" + url.port + "' is not a number from 1 to 65535");
    }
  }
  if (url.host.empty()) return fail("no host");
  *out = url;
  return true;
}

HttpClient::HttpClient(DaemonUrl url, std::string token, double timeout_seconds)
    : url_(std::move(url)),
      token_(std::move(token)),
      timeout_seconds_(timeout_seconds),
      stream_(io_) {}

HttpClient::~HttpClient() { Close(); }

void HttpClient::Close() {
  if (!is_connected_) return;
  beast::error_code ignored;
  stream_.socket().shutdown(tcp::socket::shutdown_both, ignored);
  stream_.close();
  is_connected_ = false;
}

bool HttpClient::Connect(std::string* error) {
  beast::error_code code;
  tcp::resolver resolver(io_);
  const auto endpoints = resolver.resolve(url_.host, url_.port, code);
  if (code) {
    *error = "cannot resolve " + url_.ToString() + ": " + code.message();
    return false;
  }
  stream_.expires_after(std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(timeout_seconds_)));
  stream_.connect(endpoints, code);
  if (code) {
    *error = "cannot connect to " + url_.ToString() + ": " + code.message() +
             " (is `foothold serve` running there? set --url or FOOTHOLD_URL)";
    return false;
  }
  // Small requests and answers: send each at once rather than wait for more bytes.
  stream_.socket().set_option(tcp::no_delay(true), code);
  is_connected_ = true;
  return true;
}

bool HttpClient::Send(const std::string& method, const std::string& target, const std::string& body,
                      const std::vector<std::pair<std::string, std::string>>& headers,
                      HttpClientReply* reply, std::string* error) {
  const bool reused = is_connected_;
  bool is_stale = false;
  if (SendOnce(method, target, body, headers, reply, &is_stale, error)) return true;
  // The daemon may have closed the idle connection since the last request: one retry on a
  // fresh one. A fresh connection that fails is reported as it is.
  if (!reused || !is_stale) return false;
  return SendOnce(method, target, body, headers, reply, &is_stale, error);
}

bool HttpClient::SendOnce(const std::string& method, const std::string& target,
                          const std::string& body,
                          const std::vector<std::pair<std::string, std::string>>& headers,
                          HttpClientReply* reply, bool* is_stale, std::string* error) {
  if (!is_connected_ && !Connect(error)) return false;
  http::request<http::string_body> request(http::string_to_verb(method), target, 11);
  request.set(http::field::host, url_.host);
  request.keep_alive(true);
  if (!token_.empty()) request.set(http::field::authorization, "Bearer " + token_);
  if (!body.empty()) request.set(http::field::content_type, "application/json");
  for (const auto& [name, value] : headers) request.set(name, value);
  request.body() = body;
  request.prepare_payload();

  stream_.expires_after(std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(timeout_seconds_)));
  beast::error_code code;
  http::write(stream_, request, code);
  beast::flat_buffer buffer;
  http::response_parser<http::string_body> parser;
  parser.body_limit(kMaxReplyBytes);
  if (!code) http::read(stream_, buffer, parser, code);
  if (code) {
    *is_stale = IsStaleConnection(code);
    *error = method + " " + url_.ToString() + target + ": " +
             (code == beast::error::timeout
                  ? "no answer within " + std::to_string(timeout_seconds_) + " s"
                  : code.message());
    Close();
    return false;
  }
  const http::response<http::string_body>& response = parser.get();
  reply->status = static_cast<int>(response.result_int());
  reply->body = response.body();
  reply->content_type = std::string(response[http::field::content_type]);
  reply->retry_after = std::string(response[http::field::retry_after]);
  if (!response.keep_alive()) Close();
  return true;
}

}  // namespace foothold
