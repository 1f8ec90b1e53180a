#pragma once
// `foothold compare DATA --families a,b,c [--json]`: fits each family with the normal fit
// path and ranks them (server/model_comparison.h).

#include <ostream>
#include <string>
#include <vector>

namespace foothold {

// `args` are the words after "compare". Exit codes as `foothold fit`: 0, 1 when the output
// could not be written, 2 on bad input (one line on `err`), 3 when a fit did not converge
// (the table is still printed).
int RunCompare(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

// The help text of `foothold compare`.
const char* CompareUsage();

}  // namespace foothold
