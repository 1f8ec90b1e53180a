// The real foothold binary, run as a pipeline would: exit codes and streams.
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

namespace fs = std::filesystem;

namespace {

const std::string kBinary = FOOTHOLD_BINARY_DIR "/server/foothold";

// Runs a shell command and returns its exit status (not the raw wait status).
int ExitStatus(const std::string& command) {
  const int status = std::system(command.c_str());
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

std::string ReadAll(const fs::path& path) {
  std::ifstream file(path);
  std::ostringstream text;
  text << file.rdbuf();
  return text.str();
}

}  // namespace

TEST_CASE("CliBinary: the binary fits good data and refuses bad data", "[server]") {
  INFO("the test needs the foothold target built at " << kBinary);
  REQUIRE(fs::exists(kBinary));
  const fs::path dir =
      fs::temp_directory_path() / ("foothold-binary-test-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  {
    std::ofstream good(dir / "line.csv");
    good << "x,y\n";
    for (int i = 0; i < 20; ++i) good << i << ',' << 2.0 * i + 1.0 + 0.01 * std::sin(i) << '\n';
    std::ofstream bad(dir / "bad.csv");
    bad << "x,y\n1,2\n2,oops\n";
  }
  const std::string out = (dir / "out.txt").string();
  const std::string err = (dir / "err.txt").string();
  const std::string redirect = " >" + out + " 2>" + err;

  CHECK(ExitStatus(kBinary + " fit " + (dir / "line.csv").string() +
                   " --family line --start slope=1,intercept=0" + redirect) == 0);
  CHECK(ReadAll(out).find("slope") != std::string::npos);
  CHECK(ReadAll(err).empty());

  CHECK(ExitStatus(kBinary + " fit " + (dir / "bad.csv").string() +
                   " --family line --start slope=1,intercept=0" + redirect) == 2);
  CHECK(ReadAll(out).empty());
  CHECK(ReadAll(err) == "foothold: " + (dir / "bad.csv").string() +
                            ": row 3, column 'y': 'oops' is not a number\n");

  CHECK(ExitStatus(kBinary + " fit " + (dir / "line.csv").string() +
                   " --family line --start slope=1,intercept=0 --max-iterations 0 --json" +
                   redirect) == 3);
  CHECK(ReadAll(out).find("\"iteration_limit\"") != std::string::npos);

  CHECK(ExitStatus(kBinary + " --no-such-flag" + redirect) == 2);
  std::error_code ignored;
  fs::remove_all(dir, ignored);
}
