#include "server/http/problem_codec.h"

#include "server/json_codec.h"

namespace foothold {

HttpResponse MakeProblem(unsigned version, int status, const std::string& slug,
                         const std::string& title, const std::string& detail,
                         const std::string& instance) {
  Json body = Json::object();
  body["type"] = std::string(kProblemTypeBase) + slug;
  body["title"] = title;
  body["status"] = status;
  body["detail"] = detail;
  body["instance"] = instance;
  HttpResponse response(static_cast<boost::beast::http::status>(status), version);
  response.set(boost::beast::http::field::content_type, "application/problem+json");
  // Invalid UTF-8 in an echoed field must not make the error itself fail.
  response.body() = body.dump(-1, ' ', false, Json::error_handler_t::replace);
  response.prepare_payload();
  return response;
}

}  // namespace foothold
