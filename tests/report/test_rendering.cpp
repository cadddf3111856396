// The review documents as a reviewer sees them: report.html rendered by a real browser (headless
// Chromium, Debian's `chromium`) and report.pdf rendered page by page (pdftoppm). A page that
// renders blank, or a verdict that is in the file but not in the rendered page, fails.
#include <catch2/catch.hpp>
#include <unistd.h>

#include <cairo.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/process.hpp"

namespace fs = std::filesystem;
using swaybound::testing::run_command;

namespace {
constexpr const char* kSpec = R"(
swaybound: 1
name: rendering test (invented data)
gravity: 9.81
links:
  - {name: rope, kind: rope, length: 4 m, mass: 20 kg}
  - {name: block, length: 1 m, mass: 500 kg, pivot: {damper: {coefficient: 800 N m s/rad}}}
base: {scenarios: [{name: brake, initial_velocity: {x: 1 m/s}, accel: [{for: 1.5 s, x: -0.6 m/s^2}]}]}
cases: {duration: 6 s, initial: [{grid: {theta: [[-4 deg, 4 deg, 3], [-4 deg, 4 deg, 3]]}}]}
limits:
  - {peak_angle: 12 deg}
  - {pivot_load: 12 kN}
  - {rope_tension_min: 1 kN, link: rope}
report: {title: Rendering test, revision: A}
)";

/// A fresh packet of kSpec, made once per test process.
const fs::path& packet() {
  static const fs::path dir = [] {
    const fs::path base = fs::temp_directory_path() / ("swaybound-rendering-" + std::to_string(::getpid()));
    fs::remove_all(base);
    fs::create_directories(base);
    std::ofstream(base / "spec.yaml") << kSpec;
    const auto r = run_command(fmt::format("{} check {} --out {} --quiet 2>&1", SWAYBOUND_CLI,
                                           (base / "spec.yaml").string(), (base / "packet").string()));
    INFO(r.out);
    REQUIRE(r.exited);
    REQUIRE(r.status <= 1);
    return base / "packet";
  }();
  return dir;
}

std::string verdict_text() {
  std::ifstream in(packet() / "results.json");
  const auto j = nlohmann::json::parse(in);
  return j["verdict"] == "pass" ? "Verdict: PASS" : "Verdict: FAIL";
}

/// Fraction of pixels of a PNG that are not (near) white, read with cairo. -1 when unreadable.
double inked_fraction(const fs::path& png) {
  cairo_surface_t* s = cairo_image_surface_create_from_png(png.c_str());
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS) {
    cairo_surface_destroy(s);
    return -1;
  }
  cairo_surface_flush(s);
  const int w = cairo_image_surface_get_width(s), h = cairo_image_surface_get_height(s);
  const int stride = cairo_image_surface_get_stride(s);
  const unsigned char* data = cairo_image_surface_get_data(s);
  long inked = 0;
  for (int y = 0; y < h; ++y)
    for (int x = 0; x < w; ++x) {
      const unsigned char* p = data + y * stride + 4 * x;  // ARGB32/RGB24, native-endian: B, G, R, A
      if (p[0] < 200 || p[1] < 200 || p[2] < 200) ++inked;
    }
  cairo_surface_destroy(s);
  return w * h > 0 ? static_cast<double>(inked) / (static_cast<double>(w) * h) : -1;
}

/// Headless Chromium with a fresh profile and no background network (the machine has none).
std::string chromium(const std::string& args) {
  const fs::path profile = packet().parent_path() / fmt::format("chromium-profile-{}", std::rand());
  return fmt::format(
      "chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking "
      "--disable-component-update --disable-sync --user-data-dir={} {} 2>/dev/null",
      profile.string(), args);
}
}  // namespace

TEST_CASE("report.html renders in a real browser: not blank, and the verdict is in the rendered page",
          "[report][browser]") {
  const std::string url = "file://" + fs::absolute(packet() / "report.html").string();
  const fs::path shot = packet().parent_path() / "report.png";
  const auto r = run_command(chromium(fmt::format("--window-size=1280,1600 --screenshot={} {}", shot.string(), url)));
  REQUIRE(r.exited);
  REQUIRE(fs::exists(shot));
  const double ink = inked_fraction(shot);
  INFO("inked fraction " << ink);
  CHECK(ink > 0.02);  // text, rules and the verdict box; a blank page is 0
  CHECK(ink < 0.9);   // and not a black or error-coloured page either

  // The DOM after the browser has parsed and laid out the page holds the verdict and every check.
  const auto dom = run_command(chromium("--dump-dom " + url));
  REQUIRE(dom.exited);
  CHECK(dom.out.find(verdict_text()) != std::string::npos);
  for (const char* check : {"peak_angle", "pivot_load", "rope_tension_min"}) CHECK(dom.out.find(check) != std::string::npos);
}

TEST_CASE("report.pdf pages render with ink on every page, and the verdict is in the text", "[report][browser]") {
  const fs::path pages = packet().parent_path() / "pages";
  fs::remove_all(pages);
  fs::create_directories(pages);
  const auto r = run_command(
      fmt::format("pdftoppm -r 40 -png {} {} 2>&1", (packet() / "report.pdf").string(), (pages / "page").string()));
  REQUIRE(r.exited);
  REQUIRE(r.status == 0);
  int count = 0;
  for (const auto& entry : fs::directory_iterator(pages)) {
    ++count;
    const double ink = inked_fraction(entry.path());
    INFO(entry.path().filename().string() << ": inked fraction " << ink);
    CHECK(ink > 0.005);
  }
  CHECK(count >= 6);
  const auto text = run_command(fmt::format("pdftotext {} - 2>/dev/null", (packet() / "report.pdf").string()));
  CHECK(text.out.find(verdict_text()) != std::string::npos);
}
