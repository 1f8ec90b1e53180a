#pragma once
// The flags of `foothold fit`, turned into the same FitRequest a request document gives.

#include <string>
#include <vector>

#include "server/fit_request.h"

namespace foothold {

struct FitCommand {
  FitRequest request;
  std::string data_source;  // the DATA path, or "request" for inline data
  bool json = false;        // print the result document instead of the report
  bool help = false;        // --help was given: print usage, nothing else
};

// `args` are the words after "fit". --request FILE is applied first, then DATA, then the
// other flags in the order given (a flag overrides the document's field; --start, --fix
// and --bounds merge by parameter name). Both "--flag value" and "--flag=value" work.
// False with a message naming the flag on unknown flags, missing values or bad values.
bool ParseFitArguments(const std::vector<std::string>& args, FitCommand* out, std::string* error);

// The help text of `foothold fit`.
const char* FitUsage();

}  // namespace foothold
