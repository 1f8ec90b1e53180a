// The web page (GET /) in a real browser: Debian's chromium, headless, loads the page
// from a daemon on loopback and prints the DOM it built (--dump-dom). The DOM must hold
// what the fit's JSON holds: one start-log row per start, one basin row per basin, one
// parameter row per parameter, the verdict sentence, and images whose addresses the daemon
// serves as SVG. scripts/setup.sh installs chromium (scripts/packages.txt); without it
// this test fails and says so.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

#include "tests/server/http_test_client.h"
#include "tests/server/result_compare.h"

namespace foothold {
namespace {

using nlohmann::json;
using testing::Request;

const char* const kChromium = "/usr/bin/chromium";

// The DOM chromium builds for `url`, or "" when it could not run.
std::string DumpDom(const std::string& url) {
  // --no-sandbox: tests run as root in CI; the page is our own, on loopback.
  const std::string command = std::string(kChromium) +
                              " --headless --no-sandbox --disable-gpu --disable-dev-shm-usage "
                              "--no-first-run --dump-dom '" +
                              url + "' 2>/dev/null";
  return testing::CaptureOutput(command);
}

// Rows of the table with this id (its header row included).
int CountRows(const std::string& dom, const std::string& table_id) {
  const size_t start = dom.find("<table id=\"" + table_id + "\"");
  if (start == std::string::npos) return -1;
  const size_t end = dom.find("</table>", start);
  int rows = 0;
  for (size_t at = dom.find("<tr", start); at < end; at = dom.find("<tr", at + 3)) ++rows;
  return rows;
}

std::vector<std::string> ImageSources(const std::string& dom) {
  std::vector<std::string> sources;
  const std::regex image("<img src=\"([^\"]+)\"");
  for (auto it = std::sregex_iterator(dom.begin(), dom.end(), image); it != std::sregex_iterator();
       ++it) {
    sources.push_back((*it)[1]);
  }
  return sources;
}

// The CSV body of 40 points of f on [x0, x1] plus a fixed small wiggle (no noise stream:
// the page, not the fit, is under test).
std::string Csv(double (*f)(double), double x0, double x1) {
  std::ostringstream csv;
  csv << "x,y\n";
  for (int i = 0; i < 40; ++i) {
    const double x = x0 + (x1 - x0) * i / 39.0;
    csv << x << "," << f(x) + 0.01 * std::sin(7.3 * i) << "\n";
  }
  return csv.str();
}

// Text as a serialised DOM carries it.
std::string Escaped(const std::string& text) {
  std::string out;
  for (char c : text) {
    if (c == '&')
      out += "&amp;";
    else if (c == '<')
      out += "&lt;";
    else if (c == '>')
      out += "&gt;";
    else
      out += c;
  }
  return out;
}

double Peak(double x) { return 5 * std::exp(-(x - 4) * (x - 4) / 2) + 1; }

TEST_CASE("Web page: chromium shows a fit's verdict, parameters, basins and start log",
          "[server][browser]") {
  INFO("chromium is installed by scripts/setup.sh (scripts/packages.txt)");
  REQUIRE(access(kChromium, X_OK) == 0);
  testing::Daemon daemon(testing::FreshStore("web_page"), {"--workers", "1"});
  REQUIRE(daemon.port() > 0);
  const std::string base = "http://127.0.0.1:" + std::to_string(daemon.port());

  const testing::HttpReply posted =
      Request(daemon.port(), "POST", "/v1/fits?family=gaussian&label=peak%20%3Cb%3E",
              Csv(Peak, 0, 8), "text/csv", {{"Prefer", "wait=60"}});
  REQUIRE(posted.status == 200);
  const json job = json::parse(posted.body);
  const std::string id = job["id"];
  const json& result = job["result"];

  const std::string list = DumpDom(base + "/");
  INFO(list.substr(0, 2000));
  REQUIRE(list.find("<h1>foothold</h1>") != std::string::npos);
  CHECK(CountRows(list, "jobs") == 2);  // header and the one fit
  CHECK(list.find("href=\"/?fit=" + id + "\"") != std::string::npos);
  // The label is text, never markup.
  CHECK(list.find("peak &lt;b&gt;") != std::string::npos);

  const std::string page = DumpDom(base + "/?fit=" + id);
  INFO(page.substr(0, 4000));
  REQUIRE(page.find("<table id=\"starts\"") != std::string::npos);
  CHECK(CountRows(page, "starts") == 1 + static_cast<int>(result["starts"].size()));
  CHECK(CountRows(page, "basins") == 1 + static_cast<int>(result["basins"].size()));
  CHECK(CountRows(page, "best") == 1 + static_cast<int>(result["model"]["parameters"].size()));
  const std::string summary = result["verdict"]["summary"];
  CHECK(page.find(Escaped(summary)) != std::string::npos);
  CHECK(page.find("clinical or safety decision") != std::string::npos);

  const std::vector<std::string> images = ImageSources(page);
  REQUIRE(images.size() == 2);
  for (const std::string& source : images) {
    INFO(source);
    const testing::HttpReply image = Request(daemon.port(), "GET", source);
    CHECK(image.status == 200);
    CHECK(image.content_type == "image/svg+xml");
    CHECK(image.body.find("<svg") != std::string::npos);
  }

  // A fit that does not exist is a problem document, not a page.
  CHECK(Request(daemon.port(), "GET", "/?fit=no-such-fit").status == 404);
  CHECK(Request(daemon.port(), "GET", "/?fits=" + id).status == 400);
}

}  // namespace
}  // namespace foothold
