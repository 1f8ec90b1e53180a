// Enforces the one-way dependency rule of DESIGN.md section 1: server -> heuristics ->
// engine. The engine is mathematics only, so it includes nothing from heuristics/ or
// server/ and none of the service's libraries (JSON, logging, networking, storage);
// heuristics includes nothing from server/ and no JSON.
//
// Reads every source file under engine/, heuristics/ and server/ and checks each
// #include line; a failure names the file, the line number and the include.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <optional>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

namespace fs = std::filesystem;

namespace {

struct IncludeRule {
  std::string layer;                   // folder under the source root: "engine"
  std::vector<std::string> forbidden;  // lower-case fragments an include must not contain
  std::string reason;
};

const std::vector<IncludeRule>& Rules() {
  static const std::vector<IncludeRule> rules = {
      {"engine",
       {"heuristics/", "server/", "nlohmann", "spdlog", "fmt/", "asio", "beast", "sqlite", "libpq",
        "postgres"},
       "the engine is mathematics only: Eigen, header-only Boost.Math and the standard "
       "library"},
      {"heuristics",
       {"server/", "nlohmann", "asio", "beast", "sqlite", "libpq", "postgres"},
       "heuristics depends on the engine only; JSON and I/O live in server/"},
  };
  return rules;
}

struct Violation {
  std::string file;  // relative to the source root
  int line = 0;
  std::string include;
  std::string reason;
};

bool IsSourceFile(const fs::path& path) {
  static const std::vector<std::string> kExtensions = {".h",  ".hpp", ".hh",  ".cpp",
                                                       ".cc", ".cxx", ".ipp", ".inl"};
  return std::find(kExtensions.begin(), kExtensions.end(), path.extension().string()) !=
         kExtensions.end();
}

std::string Lower(std::string text) {
  for (char& c : text) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return text;
}

// The target of an #include directive on this line, or nothing.
std::optional<std::string> IncludeTarget(const std::string& line) {
  static const std::regex kInclude(R"(^\s*#\s*include\s*[<"]([^>"]+)[>"])");
  std::smatch match;
  if (!std::regex_search(line, match, kInclude)) return std::nullopt;
  return match[1].str();
}

// A quoted include that climbs out of its folder ("../server/x.h") is resolved against
// the including file, so that it is judged by where it lands, not how it is spelled.
std::string ResolvedInclude(const std::string& include, const fs::path& file,
                            const fs::path& root) {
  if (include.rfind("./", 0) != 0 && include.rfind("../", 0) != 0) return include;
  const fs::path target = (file.parent_path() / include).lexically_normal();
  return target.lexically_relative(root).generic_string();
}

// Checks one file's text against a rule; `relative` names the file in messages.
std::vector<Violation> CheckText(const std::string& text, const std::string& relative,
                                 const fs::path& file, const fs::path& root,
                                 const IncludeRule& rule) {
  std::vector<Violation> violations;
  std::istringstream lines(text);
  std::string line;
  int line_number = 0;
  while (std::getline(lines, line)) {
    ++line_number;
    const std::optional<std::string> include = IncludeTarget(line);
    if (!include) continue;
    const std::string resolved = Lower(ResolvedInclude(*include, file, root));
    for (const std::string& fragment : rule.forbidden) {
      const bool is_layer_path = fragment.back() == '/';
      const bool hit = is_layer_path ? resolved.rfind(fragment, 0) == 0
                                     : resolved.find(fragment) != std::string::npos;
      if (hit) {
        violations.push_back({relative, line_number, *include, rule.reason});
        break;
      }
    }
  }
  return violations;
}

struct Scan {
  int num_files = 0;
  std::vector<Violation> violations;
};

Scan ScanLayer(const fs::path& root, const IncludeRule& rule) {
  Scan scan;
  const fs::path folder = root / rule.layer;
  if (!fs::is_directory(folder)) return scan;
  for (const auto& entry : fs::recursive_directory_iterator(folder)) {
    if (!entry.is_regular_file() || !IsSourceFile(entry.path())) continue;
    ++scan.num_files;
    std::ifstream in(entry.path(), std::ios::binary);
    std::ostringstream text;
    text << in.rdbuf();
    const std::string relative = entry.path().lexically_relative(root).generic_string();
    std::vector<Violation> found = CheckText(text.str(), relative, entry.path(), root, rule);
    scan.violations.insert(scan.violations.end(), found.begin(), found.end());
  }
  return scan;
}

std::string Describe(const std::vector<Violation>& violations) {
  std::ostringstream out;
  for (const Violation& v : violations) {
    out << v.file << ":" << v.line << ": #include " << v.include << " (" << v.reason << ")\n";
  }
  return out.str();
}

const IncludeRule& RuleFor(const std::string& layer) {
  for (const IncludeRule& rule : Rules()) {
    if (rule.layer == layer) return rule;
  }
  FAIL("no include rule for layer " << layer);
  return Rules().front();
}

const fs::path kRoot = fs::path(FOOTHOLD_SOURCE_DIR);

}  // namespace

TEST_CASE("Layering: the include checker flags forbidden includes and passes allowed ones",
          "[engine]") {
  const IncludeRule& engine = RuleFor("engine");
  const fs::path file = kRoot / "engine" / "solve" / "example.cpp";
  const std::string text =
      "#include \"engine/model/model.h\"\n"
      "#include <Eigen/Dense>\n"
      "#include <boost/math/distributions/students_t.hpp>\n"
      "// #include \"server/fit_service.h\" is only a comment\n"
      "#include \"heuristics/families/catalogue.h\"\n"
      "  #  include <nlohmann/json.hpp>\n"
      "#include \"../../server/router.h\"\n"
      "#include <boost/beast/http.hpp>\n";
  const std::vector<Violation> violations =
      CheckText(text, "engine/solve/example.cpp", file, kRoot, engine);
  REQUIRE(violations.size() == 4);
  CHECK(violations[0].line == 5);
  CHECK(violations[1].line == 6);
  CHECK(violations[2].line == 7);
  CHECK(violations[2].include == "../../server/router.h");
  CHECK(violations[3].line == 8);

  const IncludeRule& heuristics = RuleFor("heuristics");
  const std::string allowed = "#include \"engine/model/model.h\"\n#include <vector>\n";
  CHECK(CheckText(allowed, "heuristics/x.cpp", kRoot / "heuristics" / "x.cpp", kRoot, heuristics)
            .empty());
}

TEST_CASE("Layering: engine includes nothing from heuristics, server or service libraries",
          "[engine]") {
  const Scan scan = ScanLayer(kRoot, RuleFor("engine"));
  INFO("scanned " << scan.num_files << " files under " << (kRoot / "engine").string());
  REQUIRE(scan.num_files > 0);
  INFO(Describe(scan.violations));
  CHECK(scan.violations.empty());
}

TEST_CASE("Layering: heuristics includes nothing from server and no JSON", "[engine]") {
  const Scan scan = ScanLayer(kRoot, RuleFor("heuristics"));
  INFO("scanned " << scan.num_files << " files under " << (kRoot / "heuristics").string());
  REQUIRE(scan.num_files > 0);
  INFO(Describe(scan.violations));
  CHECK(scan.violations.empty());
}

TEST_CASE("Layering: server exists and is the only layer the rules leave unrestricted",
          "[engine]") {
  // server/ may include every layer; the walk only confirms the tree is where the rules
  // expect it, so that a moved folder cannot make the checks above pass vacuously.
  int num_files = 0;
  for (const auto& entry : fs::recursive_directory_iterator(kRoot / "server")) {
    if (entry.is_regular_file() && IsSourceFile(entry.path())) ++num_files;
  }
  CHECK(num_files > 0);
  for (const IncludeRule& rule : Rules()) CHECK(rule.layer != "server");
}
