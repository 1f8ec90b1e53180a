// `foothold serve` configuration: every flag has an environment twin, flags win over
// twins, bad values name the flag, and --help documents each with its default.
#include <catch2/catch.hpp>
#include <cstdlib>
#include <string>

#include "server/serve_command.h"

namespace foothold {

TEST_CASE("ServeOptions: defaults, environment twins and flags that win over them",
          "[server]") {
  ServeOptions options;
  std::string error;
  unsetenv("FOOTHOLD_PORT");
  unsetenv("FOOTHOLD_MAX_QUEUE");
  REQUIRE(ParseServeArguments({}, &options, &error));
  CHECK(options.listen == "127.0.0.1");
  CHECK(options.port == 8470);
  CHECK(options.store == "./foothold.db");

  setenv("FOOTHOLD_PORT", "9001", 1);
  setenv("FOOTHOLD_MAX_QUEUE", "7", 1);
  REQUIRE(ParseServeArguments({}, &options, &error));
  CHECK(options.port == 9001);
  CHECK(options.limits.max_queue == 7);
  REQUIRE(ParseServeArguments({"--port", "9002", "--max-queue=8"}, &options, &error));
  CHECK(options.port == 9002);
  CHECK(options.limits.max_queue == 8);

  setenv("FOOTHOLD_PORT", "ninety", 1);
  CHECK_FALSE(ParseServeArguments({}, &options, &error));
  CHECK(error.find("FOOTHOLD_PORT") != std::string::npos);
  unsetenv("FOOTHOLD_PORT");
  unsetenv("FOOTHOLD_MAX_QUEUE");

  CHECK_FALSE(ParseServeArguments({"--max-points", "-3"}, &options, &error));
  CHECK(error.find("--max-points") != std::string::npos);
  CHECK_FALSE(ParseServeArguments({"--colour", "red"}, &options, &error));
  CHECK(error.find("unknown flag '--colour'") != std::string::npos);
  CHECK_FALSE(ParseServeArguments({"--log-format", "xml"}, &options, &error));
  CHECK_FALSE(ParseServeArguments({"--store"}, &options, &error));
  CHECK(error.find("needs a value") != std::string::npos);
}

TEST_CASE("ServeUsage: every flag with its environment twin and default", "[server]") {
  const std::string usage = ServeUsage();
  for (const char* flag :
       {"listen", "port", "store", "workers", "token-file", "log-format", "retain-days",
        "shutdown-grace-seconds", "max-body-bytes", "max-points", "max-starts", "max-parameters",
        "max-expression-length", "max-job-seconds", "max-queue", "header-timeout-seconds",
        "body-timeout-seconds", "max-connections"}) {
    INFO("flag " << flag);
    CHECK(usage.find(std::string("--") + flag + " (FOOTHOLD_") != std::string::npos);
  }
  CHECK(usage.find("--port (FOOTHOLD_PORT, default '8470')") != std::string::npos);
}

}  // namespace foothold
