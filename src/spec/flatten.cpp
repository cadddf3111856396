// The normalised spec as a flat list of (key path, value) pairs, for comparing two specs (diff).
#include <algorithm>

#include <fmt/format.h>
#include <yaml-cpp/yaml.h>

#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace {
void flatten(const YAML::Node& node, const std::string& path, std::vector<std::pair<std::string, std::string>>& out) {
  if (node.IsMap()) {
    for (auto it = node.begin(); it != node.end(); ++it)
      flatten(it->second, path.empty() ? it->first.Scalar() : path + "." + it->first.Scalar(), out);
  } else if (node.IsSequence()) {
    bool scalars = true;
    for (const auto& item : node) scalars &= item.IsScalar() || (item.IsSequence() && std::all_of(item.begin(), item.end(), [](const YAML::Node& x) { return x.IsScalar(); }));
    if (scalars) {  // a short list of values reads best as one value
      YAML::Emitter e;
      e << YAML::Flow << node;
      out.emplace_back(path, e.c_str());
      return;
    }
    for (std::size_t i = 0; i < node.size(); ++i) {
      const YAML::Node item = node[i];
      const std::string label = item.IsMap() && item["name"] ? item["name"].Scalar() : std::to_string(i);
      flatten(item, fmt::format("{}[{}]", path, label), out);
    }
  } else if (node.IsScalar()) {
    out.emplace_back(path, node.Scalar());
  }
}
}  // namespace

std::vector<std::pair<std::string, std::string>> flatten_spec(const Spec& spec) {
  std::vector<std::pair<std::string, std::string>> out;
  flatten(YAML::Load(normalised_yaml(spec)), "", out);
  return out;
}

}  // namespace swaybound
