#pragma once
// Running one of the outside references of tests/reference/ (SymPy derivations) from a test: the
// input as JSON on stdin, the output as JSON on stdout. A reference that cannot run FAILs the test
// (it is not optional): the python the build found must import SymPy and NumPy.
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include <unistd.h>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include "process.hpp"

namespace swaybound::testing {

/// Runs tests/reference/`script` with `input` on stdin and returns its JSON output; `seconds` (if
/// given) receives the wall time of the run. REQUIREs an exit status of 0 and shows the script's
/// stderr otherwise.
inline nlohmann::json run_python_reference(const std::string& script, const nlohmann::json& input,
                                           double* seconds = nullptr) {
  const std::string python = SWAYBOUND_PYTHON;
  const std::string path = std::string(SWAYBOUND_SOURCE_DIR) + "/tests/reference/" + script;
  if (std::system((python + " -c 'import sympy, numpy' > /dev/null 2>&1").c_str()) != 0)
    FAIL(python << " cannot import sympy and numpy: this test needs python3-sympy and python3-numpy "
                   "(apt-get install python3-sympy python3-numpy); it is not optional");
  const auto tmp = std::filesystem::temp_directory_path();
  const std::string tag = "swaybound_reference_" + std::to_string(::getpid()) + "_" + script;
  const auto in_file = tmp / (tag + "_in.json"), err_file = tmp / (tag + "_err.txt");
  std::ofstream(in_file) << input.dump();
  const std::string command = python + " '" + path + "' < '" + in_file.string() + "' 2> '" + err_file.string() + "'";
  const auto t0 = std::chrono::steady_clock::now();
  const CommandResult run = run_command(command);
  if (seconds) *seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  std::stringstream err;
  err << std::ifstream(err_file).rdbuf();
  std::filesystem::remove(in_file);
  std::filesystem::remove(err_file);
  INFO("command: " << command << "\nstderr:\n" << err.str());
  REQUIRE(run.started);
  REQUIRE((run.exited && run.status == 0));
  return nlohmann::json::parse(run.out);
}

}  // namespace swaybound::testing
