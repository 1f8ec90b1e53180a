#pragma once
// Helpers for server tests that compare result documents across runs: timing fields
// removed, and the standard output of a foothold command captured.

#include <cstdio>
#include <nlohmann/json.hpp>
#include <string>

namespace foothold {
namespace testing {

// Removes every timing field (seconds, elapsed_ms, *_seconds, *_ms) at any depth: the only
// fields of a result document that differ between two runs of the same request.
inline void StripTimings(nlohmann::json* value) {
  if (value->is_object()) {
    for (auto it = value->begin(); it != value->end();) {
      const std::string& key = it.key();
      const bool timing = key == "seconds" || key == "elapsed_ms" ||
                          (key.size() > 8 && key.substr(key.size() - 8) == "_seconds") ||
                          (key.size() > 3 && key.substr(key.size() - 3) == "_ms");
      if (timing) {
        it = value->erase(it);
      } else {
        StripTimings(&it.value());
        ++it;
      }
    }
  } else if (value->is_array()) {
    for (nlohmann::json& item : *value) StripTimings(&item);
  }
}

// Standard output of a shell command (empty when it cannot start).
inline std::string CaptureOutput(const std::string& command) {
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return "";
  std::string output;
  char buffer[4096];
  size_t got;
  while ((got = fread(buffer, 1, sizeof(buffer), pipe)) > 0) output.append(buffer, got);
  pclose(pipe);
  return output;
}

}  // namespace testing
}  // namespace foothold
