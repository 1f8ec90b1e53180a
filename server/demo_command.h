#pragma once
// `foothold demo`: starts a daemon on a temporary store, posts every dataset of
// docs/examples/manifest.tsv over HTTP, polls them and prints one summary table.

#include <iosfwd>
#include <string>
#include <vector>

namespace foothold {

// Exit status 0 when every dataset was fitted and converged, 1 otherwise, 2 on bad input.
int RunDemo(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

}  // namespace foothold
