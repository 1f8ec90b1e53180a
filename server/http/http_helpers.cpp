#include "server/http/http_helpers.h"

#include <cctype>

namespace foothold {
namespace {

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

bool PercentDecode(const std::string& text, std::string* out) {
  out->clear();
  for (size_t i = 0; i < text.size(); ++i) {
    if (text[i] == '+') {
      *out += ' ';
    } else if (text[i] == '%') {
      if (i + 2 >= text.size()) return false;
      const int high = HexValue(text[i + 1]);
      const int low = HexValue(text[i + 2]);
      if (high < 0 || low < 0) return false;
      *out += static_cast<char>(high * 16 + low);
      i += 2;
    } else {
      *out += text[i];
    }
  }
  return true;
}

}  // namespace

HttpResponse JsonResponse(const HttpRequest& request, int status, const Json& body) {
  HttpResponse response(static_cast<boost::beast::http::status>(status), request.version());
  response.set(boost::beast::http::field::content_type, "application/json");
  response.body() = body.dump(-1, ' ', false, Json::error_handler_t::replace);
  response.prepare_payload();
  return response;
}

bool ParseQuery(const std::string& text, std::map<std::string, std::string>* out,
                std::string* error) {
  out->clear();
  size_t begin = 0;
  while (begin < text.size()) {
    size_t end = text.find('&', begin);
    if (end == std::string::npos) end = text.size();
    const std::string pair = text.substr(begin, end - begin);
    begin = end + 1;
    if (pair.empty()) continue;
    const size_t equals = pair.find('=');
    std::string name, value;
    if (!PercentDecode(pair.substr(0, equals), &name) ||
        !PercentDecode(equals == std::string::npos ? "" : pair.substr(equals + 1), &value)) {
      *error = "query parameter '" + pair + "': invalid percent escape";
      return false;
    }
    if (out->count(name)) {
      *error = "query parameter '" + name + "' given twice";
      return false;
    }
    (*out)[name] = value;
  }
  return true;
}

std::string HtmlEscape(const std::string& text) {
  std::string out;
  for (char c : text) {
    switch (c) {
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '&':
        out += "&amp;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

std::string MediaType(const std::string& content_type) {
  std::string type = content_type.substr(0, content_type.find(';'));
  while (!type.empty() && std::isspace(static_cast<unsigned char>(type.back()))) type.pop_back();
  size_t start = 0;
  while (start < type.size() && std::isspace(static_cast<unsigned char>(type[start]))) ++start;
  type = type.substr(start);
  for (char& c : type) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return type;
}

}  // namespace foothold
