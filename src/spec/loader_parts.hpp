#pragma once
// Private: the parts of the loader, shared between loader.cpp and loader_cases.cpp.
#include "reader.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::spec_detail {

/// Reads a link name and returns its index, or -1 after reporting an unknown name.
int read_link_ref(Context& ctx, const YAML::Node& node, const std::string& path, const Spec& spec);

void read_cases(const MapView& top, Spec& spec, const LoadOptions& options);
void read_limits(const MapView& top, Spec& spec);
void read_chaos(const MapView& top, Spec& spec);
void read_sizing(const MapView& top, Spec& spec);
void read_solver_and_report(const MapView& top, Spec& spec);

}  // namespace swaybound::spec_detail
