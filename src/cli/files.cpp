#include <fstream>
#include <sstream>

#include <fmt/format.h>

#include "commands.hpp"
#include "swaybound/core/error.hpp"

namespace swaybound::cli {

std::string read_file_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  if (!in && !in.eof()) throw RunError(fmt::format("cannot read {}", path));
  return s.str();
}

}  // namespace swaybound::cli
