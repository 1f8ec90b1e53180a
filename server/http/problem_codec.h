#pragma once
// RFC 9457 problem documents. Every 4xx and 5xx the daemon sends is one of these, with a
// type URI under kProblemTypeBase naming the kind of problem and a detail naming the
// field, the index and what was expected.

#include <string>

#include "server/http/http_types.h"

namespace foothold {

// Types are kProblemTypeBase + slug, e.g. ".../problems/invalid-request". docs/api.md
// lists every slug.
constexpr const char* kProblemTypeBase = "https://foothold.dev/problems/";

HttpResponse MakeProblem(unsigned version, int status, const std::string& slug,
                         const std::string& title, const std::string& detail,
                         const std::string& instance);

}  // namespace foothold
