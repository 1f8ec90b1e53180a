#pragma once
// Small pieces the routes share: JSON responses, query strings, HTML escaping.

#include <map>
#include <string>

#include "server/http/http_types.h"
#include "server/json_codec.h"

namespace foothold {

HttpResponse JsonResponse(const HttpRequest& request, int status, const Json& body);
// "a=1&b=x%20y" into a map; false on bad percent escapes or a name given twice.
bool ParseQuery(const std::string& text, std::map<std::string, std::string>* out,
                std::string* error);
std::string HtmlEscape(const std::string& text);
// The media type of a Content-Type value, lower case, without parameters.
std::string MediaType(const std::string& content_type);

}  // namespace foothold
