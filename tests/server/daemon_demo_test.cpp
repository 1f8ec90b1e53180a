// `foothold demo`: a temporary daemon fits every manifest dataset and one table comes back.
#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>
#include <string>

TEST_CASE("Demo: every manifest dataset is fitted through a temporary daemon", "[server]") {
  const std::string examples = std::string(FOOTHOLD_SOURCE_DIR) + "/docs/examples";
  const std::string command = std::string(FOOTHOLD_BINARY_DIR) +
                              "/server/foothold demo --examples " + examples + " 2>/dev/null";
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe);
  std::string output;
  char buffer[4096];
  size_t got;
  while ((got = fread(buffer, 1, sizeof(buffer), pipe)) > 0) output.append(buffer, got);
  const int status = pclose(pipe);
  CHECK(WEXITSTATUS(status) == 0);
  CHECK(output.rfind("dataset", 0) == 0);
  std::ifstream manifest(examples + "/manifest.tsv");
  std::string line;
  int rows = 0;
  while (std::getline(manifest, line)) {
    if (line.empty() || line[0] == '#' || line.rfind("file\t", 0) == 0) continue;
    const std::string file = line.substr(0, line.find('\t'));
    INFO("dataset " << file);
    CHECK(output.find("\n" + file + " ") != std::string::npos);
    ++rows;
  }
  CHECK(rows >= 5);
  CHECK(output.find("not run") == std::string::npos);
}
