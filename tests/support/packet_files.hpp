#pragma once
// What swaybound keeps beside a packet folder while it works on it (its lock file and temporary
// folders, named .NAME.swaybound-...), for tests that check nothing is left behind.
#include <filesystem>
#include <string>
#include <vector>

#include <fmt/format.h>

namespace swaybound::testing {

/// Names beside `out` that belong to swaybound runs on it (.NAME.swaybound-...), by file name.
inline std::vector<std::string> leftovers(const std::filesystem::path& out) {
  std::vector<std::string> found;
  const std::string prefix = fmt::format(".{}.swaybound-", out.filename().string());
  for (const auto& entry : std::filesystem::directory_iterator(out.parent_path()))
    if (entry.path().filename().string().rfind(prefix, 0) == 0) found.push_back(entry.path().filename().string());
  return found;
}

}  // namespace swaybound::testing
