#pragma once
// The HTTP message types the daemon uses: whole string bodies on both sides.

#include <boost/beast/http.hpp>
#include <string>

namespace foothold {

using HttpRequest = boost::beast::http::request<boost::beast::http::string_body>;
using HttpResponse = boost::beast::http::response<boost::beast::http::string_body>;

}  // namespace foothold
