// Keeps docker/Dockerfile in step with scripts/packages.txt, the one list of packages
// that scripts/setup.sh installs, and checks the image's operational instructions.
//
// No Docker engine runs where the tests run, so this reads the files as text: the
// Dockerfile instruction syntax (comment lines, backslash continuations, FROM stages) is
// the one documented in Docker's Dockerfile reference.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cctype>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

namespace {

std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string Trim(const std::string& text) {
  const auto first = text.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return "";
  const auto last = text.find_last_not_of(" \t\r\n");
  return text.substr(first, last - first + 1);
}

std::string Upper(std::string text) {
  for (char& c : text) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  return text;
}

struct PackageLine {
  std::string name;
  std::string tag;  // the word before ':' in the line's comment ("build", "test", "dev")
};

// scripts/packages.txt: one package a line, '#' starts a comment, the comment of a
// package line may start with a tag such as "build:".
std::vector<PackageLine> ParsePackageList(const std::string& text) {
  std::vector<PackageLine> packages;
  std::istringstream lines(text);
  std::string line;
  while (std::getline(lines, line)) {
    const auto hash = line.find('#');
    const std::string name = Trim(line.substr(0, hash));
    if (name.empty()) continue;
    PackageLine package{name, ""};
    if (hash != std::string::npos) {
      const std::string comment = Trim(line.substr(hash + 1));
      const auto colon = comment.find(':');
      if (colon != std::string::npos) package.tag = Trim(comment.substr(0, colon));
    }
    packages.push_back(package);
  }
  return packages;
}

struct Instruction {
  std::string keyword;    // upper case: FROM, RUN, USER, ...
  std::string arguments;  // continuation lines joined with a space
  int stage = 0;          // 0 for the first FROM's stage, 1 for the second, ...
};

// Splits a Dockerfile into instructions. Comment lines are dropped (also inside a
// continued instruction, as Docker does) and lines ending in a backslash continue.
std::vector<Instruction> ParseDockerfile(const std::string& text) {
  std::vector<Instruction> instructions;
  std::istringstream lines(text);
  std::string line;
  std::string pending;
  int stage = -1;
  auto flush = [&]() {
    const std::string joined = Trim(pending);
    pending.clear();
    if (joined.empty()) return;
    const auto space = joined.find_first_of(" \t");
    Instruction instruction;
    instruction.keyword = Upper(joined.substr(0, space));
    instruction.arguments = space == std::string::npos ? "" : Trim(joined.substr(space));
    if (instruction.keyword == "FROM") ++stage;
    instruction.stage = stage;
    instructions.push_back(instruction);
  };
  while (std::getline(lines, line)) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    const std::string trimmed = Trim(line);
    if (!trimmed.empty() && trimmed[0] == '#') continue;
    if (!line.empty() && line.back() == '\\') {
      pending += line.substr(0, line.size() - 1) + " ";
      continue;
    }
    pending += line;
    flush();
  }
  flush();
  return instructions;
}

std::vector<std::string> Words(const std::string& text) {
  std::vector<std::string> words;
  std::istringstream in(text);
  std::string word;
  while (in >> word) words.push_back(word);
  return words;
}

// The packages named by every `apt-get install` in the RUN instructions of one stage:
// the words after "install" that are not options, up to the end of that shell command.
std::vector<std::string> AptPackages(const std::vector<Instruction>& instructions, int stage) {
  std::vector<std::string> packages;
  for (const Instruction& instruction : instructions) {
    if (instruction.stage != stage || instruction.keyword != "RUN") continue;
    const std::vector<std::string> words = Words(instruction.arguments);
    for (size_t i = 0; i + 1 < words.size(); ++i) {
      const bool is_apt = words[i] == "apt-get" || words[i] == "apt";
      if (!is_apt) continue;
      size_t j = i + 1;
      while (j < words.size() && words[j][0] == '-') ++j;
      if (j >= words.size() || words[j] != "install") continue;
      for (++j; j < words.size(); ++j) {
        const std::string& word = words[j];
        if (word == "&&" || word == "||" || word == ";" || word == "|") break;
        if (word[0] == '-') continue;
        std::string name = word;
        if (!name.empty() && name.back() == ';') name.pop_back();
        packages.push_back(name);
        if (word.back() == ';') break;
      }
    }
  }
  return packages;
}

int CountKeyword(const std::vector<Instruction>& instructions, const std::string& keyword) {
  return static_cast<int>(
      std::count_if(instructions.begin(), instructions.end(),
                    [&](const Instruction& i) { return i.keyword == keyword; }));
}

std::vector<Instruction> InStage(const std::vector<Instruction>& instructions, int stage,
                                 const std::string& keyword) {
  std::vector<Instruction> found;
  for (const Instruction& instruction : instructions) {
    if (instruction.stage == stage && instruction.keyword == keyword) found.push_back(instruction);
  }
  return found;
}

const std::string kSourceDir = FOOTHOLD_SOURCE_DIR;
const std::string kDockerfilePath = kSourceDir + "/docker/Dockerfile";
const std::string kPackagesPath = kSourceDir + "/scripts/packages.txt";

}  // namespace

TEST_CASE("DockerPackages: the Dockerfile reader joins continuations and finds apt packages",
          "[server]") {
  const std::string text =
      "# a comment\n"
      "FROM debian:bookworm-slim AS build\n"
      "RUN apt-get update \\\n"
      "# a comment inside the instruction\n"
      " && apt-get install -y --no-install-recommends \\\n"
      "      cmake g++ \\\n"
      "      libeigen3-dev && rm -rf /var/lib/apt/lists/*\n"
      "FROM debian:bookworm-slim\n"
      "RUN apt-get -q install -y curl; echo done\n"
      "user foothold\n";
  const std::vector<Instruction> instructions = ParseDockerfile(text);
  REQUIRE(CountKeyword(instructions, "FROM") == 2);
  CHECK(AptPackages(instructions, 0) == std::vector<std::string>{"cmake", "g++", "libeigen3-dev"});
  CHECK(AptPackages(instructions, 1) == std::vector<std::string>{"curl"});
  REQUIRE(InStage(instructions, 1, "USER").size() == 1);
  CHECK(InStage(instructions, 1, "USER")[0].arguments == "foothold");
}

TEST_CASE("DockerPackages: the package list reader keeps names and tags", "[server]") {
  const std::vector<PackageLine> packages =
      ParsePackageList("# header\n\ncmake   # build: configure\ncurl # test: smoke\nmake\n");
  REQUIRE(packages.size() == 3);
  CHECK(packages[0].name == "cmake");
  CHECK(packages[0].tag == "build");
  CHECK(packages[1].tag == "test");
  CHECK(packages[2].name == "make");
  CHECK(packages[2].tag.empty());
}

TEST_CASE("DockerPackages: the build stage installs exactly the build packages of the setup list",
          "[server]") {
  const std::string dockerfile = ReadFile(kDockerfilePath);
  const std::string package_text = ReadFile(kPackagesPath);
  REQUIRE_FALSE(dockerfile.empty());
  REQUIRE_FALSE(package_text.empty());

  const std::vector<PackageLine> setup_list = ParsePackageList(package_text);
  std::set<std::string> setup_names;
  std::set<std::string> build_names;
  for (const PackageLine& package : setup_list) {
    setup_names.insert(package.name);
    if (package.tag == "build") build_names.insert(package.name);
  }
  REQUIRE_FALSE(build_names.empty());

  const std::vector<Instruction> instructions = ParseDockerfile(dockerfile);
  const std::vector<std::string> build_stage = AptPackages(instructions, 0);
  REQUIRE_FALSE(build_stage.empty());
  const std::set<std::string> build_stage_names(build_stage.begin(), build_stage.end());

  for (const std::string& package : build_stage) {
    INFO("docker/Dockerfile's build stage installs '" << package
                                                      << "', which scripts/packages.txt lacks");
    CHECK(setup_names.count(package) == 1);
  }
  for (const std::string& package : build_names) {
    INFO("scripts/packages.txt tags '" << package
                                       << "' as build:, but the Dockerfile's build stage "
                                          "does not install it");
    CHECK(build_stage_names.count(package) == 1);
  }
}

TEST_CASE("DockerPackages: the image is multi-stage, unprivileged and health-checked", "[server]") {
  const std::vector<Instruction> instructions = ParseDockerfile(ReadFile(kDockerfilePath));
  const int num_stages = CountKeyword(instructions, "FROM");
  REQUIRE(num_stages >= 2);
  const int runtime = num_stages - 1;

  for (const Instruction& from : InStage(instructions, 0, "FROM")) {
    CHECK(from.arguments.find("debian:bookworm-slim") == 0);
  }
  for (const Instruction& from : InStage(instructions, runtime, "FROM")) {
    CHECK(from.arguments.find("debian:bookworm-slim") == 0);
  }

  // The build stage builds without the tests.
  bool builds_without_tests = false;
  for (const Instruction& run : InStage(instructions, 0, "RUN")) {
    if (run.arguments.find("-DFOOTHOLD_BUILD_TESTS=OFF") != std::string::npos) {
      builds_without_tests = true;
    }
  }
  CHECK(builds_without_tests);

  // The runtime stage copies the binary from the build stage and installs no -dev package.
  bool copies_binary = false;
  for (const Instruction& copy : InStage(instructions, runtime, "COPY")) {
    if (copy.arguments.find("--from=") != std::string::npos &&
        copy.arguments.find("foothold") != std::string::npos) {
      copies_binary = true;
    }
  }
  CHECK(copies_binary);
  const std::vector<std::string> runtime_packages = AptPackages(instructions, runtime);
  for (const std::string& package : runtime_packages) {
    INFO("the runtime stage installs " << package);
    CHECK(package.find("-dev") == std::string::npos);
  }

  const std::vector<Instruction> users = InStage(instructions, runtime, "USER");
  REQUIRE_FALSE(users.empty());
  CHECK(users.back().arguments != "root");
  CHECK(users.back().arguments != "0");

  const std::vector<Instruction> healthchecks = InStage(instructions, runtime, "HEALTHCHECK");
  REQUIRE(healthchecks.size() == 1);
  CHECK(healthchecks[0].arguments.find("curl") != std::string::npos);
  CHECK(healthchecks[0].arguments.find("http://127.0.0.1:8470/healthz") != std::string::npos);
  CHECK(std::find(runtime_packages.begin(), runtime_packages.end(), "curl") !=
        runtime_packages.end());

  const std::vector<Instruction> volumes = InStage(instructions, runtime, "VOLUME");
  REQUIRE(volumes.size() == 1);
  CHECK(volumes[0].arguments.find("/var/lib/foothold") != std::string::npos);

  const std::vector<Instruction> exposes = InStage(instructions, runtime, "EXPOSE");
  REQUIRE(exposes.size() == 1);
  CHECK(exposes[0].arguments == "8470");

  const std::vector<Instruction> entrypoints = InStage(instructions, runtime, "ENTRYPOINT");
  REQUIRE(entrypoints.size() == 1);
  CHECK(entrypoints[0].arguments == "[\"foothold\", \"serve\"]");

  std::string environment;
  for (const Instruction& env : InStage(instructions, runtime, "ENV")) {
    environment += env.arguments + " ";
  }
  for (const char* variable : {"FOOTHOLD_LISTEN=", "FOOTHOLD_PORT=8470", "FOOTHOLD_STORE="}) {
    INFO("runtime ENV lacks " << variable);
    CHECK(environment.find(variable) != std::string::npos);
  }
}

TEST_CASE("DockerPackages: compose runs one daemon on a volume from the same Dockerfile",
          "[server]") {
  const std::string compose = ReadFile(kSourceDir + "/docker/compose.yaml");
  REQUIRE_FALSE(compose.empty());
  CHECK(compose.find("dockerfile: docker/Dockerfile") != std::string::npos);
  CHECK(compose.find(":/var/lib/foothold") != std::string::npos);
  CHECK(compose.find("8470") != std::string::npos);

  const std::string ignore = ReadFile(kSourceDir + "/.dockerignore");
  const std::vector<std::string> patterns = Words(ignore);
  CHECK(std::find(patterns.begin(), patterns.end(), ".git") != patterns.end());
}
