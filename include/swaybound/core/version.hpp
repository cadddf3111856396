#pragma once
#include <string_view>

namespace swaybound {
std::string_view tool_version();  ///< semantic version of the tool, e.g. "0.1.0"
std::string_view git_commit();    ///< short git commit the build was configured from, or "unknown"
std::string_view compiler_id();   ///< compiler name and version used for the build
}  // namespace swaybound
