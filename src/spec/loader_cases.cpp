// Long for a reason: cases, limits, chaos, sizing and solver each validate many coupled keys here.
// What each limit kind and case-set kind is comes from their tables (checks/limit_kinds.hpp,
// spec/case_set_kinds.hpp); the sections can move to files of their own without touching them.
// Spec loader, part 2: cases, limits, sizing, solver and report metadata.
#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include <fmt/format.h>

#include <tuple>

#include "loader_parts.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/spec/case_set_kinds.hpp"
#include "swaybound/spec/paths.hpp"

namespace swaybound {

using namespace spec_detail;
namespace u = units;

long initial_set_size(const InitialSetSpec& set) { return initial_kind(set.kind).size(set); }

long case_count(const Spec& spec) {
  long starts = 0;
  for (const auto& set : spec.cases.initial) starts = std::min(starts + initial_set_size(set), 1'000'000'001L);
  return starts * static_cast<long>(spec.scenarios.size());
}

long samples_per_case(double duration, double output_rate) {
  const double samples = std::floor(duration * output_rate) + 1;
  return samples < 1e18 ? static_cast<long>(samples) : 1'000'000'000'000'000'000L;
}

namespace spec_detail {
namespace {

/// cases.duration x cases.output_rate against the cap on samples kept per case (LoadOptions).
void check_sample_cap(const MapView& cases, const Spec& spec, const LoadOptions& options) {
  const long samples = samples_per_case(spec.cases.duration, spec.cases.output_rate);
  if (samples <= options.max_samples) return;
  const std::string key = cases.has("output_rate") ? "output_rate" : "duration";
  cases.ctx().error(
      cases.get(key), cases.path(key),
      fmt::format("{:g} s at {:g} samples/s gives {} samples per case, more than the cap of {}",
                  spec.cases.duration, spec.cases.output_rate, samples, options.max_samples),
      fmt::format("lower cases.output_rate (at most {:g} /s for this duration) or cases.duration, or "
                  "raise the cap with --max-samples N",
                  std::floor(static_cast<double>(options.max_samples - 1) / spec.cases.duration)));
}

/// The keys of the kinds of initial-condition set, in the table's order.
std::string kind_list() {
  std::string all;
  for (const auto& k : initial_kinds()) all += (all.empty() ? "" : ", ") + std::string(k.name);
  return all;
}

}  // namespace

/// Reads a per-link list of values ("single" and ladder "from"): [10 deg, -5 deg].
void read_value_list(Context& ctx, const YAML::Node& node, const std::string& path, const u::Dim& dim,
                     std::size_t links, std::vector<Range>& out) {
  if (!expect_sequence(ctx, node, path, fmt::format("{} values, one per link from the top", u::dim_name(dim))))
    return;
  if (node.size() > links) {
    ctx.error(node, path, fmt::format("{} values given for {} links", node.size(), links),
              "give at most one value per link, top link first");
    return;
  }
  for (std::size_t i = 0; i < node.size(); ++i)
    if (auto v = read_quantity(ctx, node[i], fmt::format("{}[{}]", path, i), dim)) out.push_back({*v, *v, 1});
}

/// Reads a per-link list of ranges: [[lo, hi, n], ...] for grids, [[lo, hi], ...] otherwise.
void read_range_list(Context& ctx, const YAML::Node& node, const std::string& path, const u::Dim& dim,
                     std::size_t links, bool with_count, std::vector<Range>& out) {
  const std::string shape = with_count ? "[low, high, count]" : "[low, high]";
  if (!expect_sequence(ctx, node, path, fmt::format("ranges {} per link from the top", shape))) return;
  if (node.size() > links) {
    ctx.error(node, path, fmt::format("{} ranges given for {} links", node.size(), links),
              "give at most one range per link, top link first");
    return;
  }
  for (std::size_t i = 0; i < node.size(); ++i) {
    const std::string p = fmt::format("{}[{}]", path, i);
    const YAML::Node r = node[i];
    if (!r.IsSequence() || r.size() != (with_count ? 3u : 2u)) {
      ctx.error(r, p, fmt::format("expected a range {}", shape),
                with_count ? "write e.g. [-10 deg, 10 deg, 5]" : "write e.g. [-10 deg, 10 deg]");
      continue;
    }
    Range range;
    auto lo = read_quantity(ctx, r[0], p + "[0]", dim);
    auto hi = read_quantity(ctx, r[1], p + "[1]", dim);
    if (with_count) {
      if (auto n = read_integer(ctx, r[2], p + "[2]", 1, 100'000)) range.count = static_cast<int>(*n);
    }
    if (lo && hi) {
      if (*lo > *hi) {
        ctx.error(r, p, fmt::format("the range is inverted: low {} > high {}", u::format_si(*lo, dim),
                                    u::format_si(*hi, dim)),
                  "write the lower bound first");
        continue;
      }
      range.lo = *lo;
      range.hi = *hi;
    }
    out.push_back(range);
  }
}

void read_random_sampling(const MapView& s, InitialSetSpec& set) {
  Context& ctx = s.ctx();
  if (s.require("count", "how many random starts"))
    if (auto c = read_integer(ctx, s.get("count"), s.path("count"), 1, 100'000'000)) set.count = static_cast<int>(*c);
  if (s.require("seed", "a seed for the random generator, so runs repeat"))
    if (auto c = read_integer(ctx, s.get("seed"), s.path("seed"), 0, 1LL << 53)) set.seed = static_cast<std::uint64_t>(*c);
  if (s.has("method")) {
    if (auto c = read_choice(ctx, s.get("method"), s.path("method"), {"uniform", "latin_hypercube"}))
      set.method = *c == "uniform" ? SamplingMethod::uniform : SamplingMethod::latin_hypercube;
  } else {
    ctx.defaults_filled.push_back(s.path("method"));
  }
}

namespace {

/// Reads a set's out-of-plane lists phi [angle] and phi_rate [angular rate] per link, as values
/// (`ranges` false) or ranges (`counted`: with counts, for a grid); refused on a planar chain.
void read_out_of_plane(const MapView& s, const Spec& spec, bool ranges, bool counted, InitialSetSpec& set) {
  Context& ctx = s.ctx();
  const std::size_t n = spec.links.size();
  for (const auto& [key, dim, list] : {std::tuple{"phi", &u::angle, &set.phi}, {"phi_rate", &u::angular_rate, &set.phi_rate}}) {
    if (!s.has(key)) continue;
    if (spec.motion != Motion::spatial) {
      ctx.error(s.key_mark(key), s.path(key),
                fmt::format("'{}' is a swing out of the travel plane, which a planar chain does not have", key),
                "add 'motion: spatial' at the top of the spec, or remove this key");
      continue;
    }
    if (ranges)
      read_range_list(ctx, s.get(key), s.path(key), *dim, n, counted, *list);
    else
      read_value_list(ctx, s.get(key), s.path(key), *dim, n, *list);
  }
}

/// True when the set's body gives some start quantity.
bool has_start_key(const MapView& s) {
  return s.has("theta") || s.has("rate") || s.has("phi") || s.has("phi_rate") || s.has("amplitude");
}

void read_initial_set(Context& ctx, const YAML::Node& node, const std::string& path, const Spec& spec,
                      InitialSetSpec& set) {
  std::vector<std::string_view> keys{"name"};
  for (const auto& k : initial_kinds()) keys.push_back(k.name);
  MapView m(ctx, node, path, keys);
  if (!m.ok()) return;
  set.mark = m.mark();
  const InitialKindInfo* info = nullptr;
  int kinds = 0;
  for (const auto& k : initial_kinds())
    if (m.has(k.name)) {
      info = &k;
      ++kinds;
    }
  if (kinds != 1) {
    ctx.error(m.mark(), path, kinds == 0 ? "no kind of initial set given" : "more than one kind of initial set given",
              "give exactly one of: " + kind_list());
    return;
  }
  set.kind = info->kind;
  const std::string kind(info->name);
  set.name = kind;
  if (m.has("name")) {
    if (auto s = read_string(ctx, m.get("name"), m.path("name"))) set.name = *s;
  } else {
    ctx.defaults_filled.push_back(m.path("name"));
  }
  const std::size_t n = spec.links.size();
  const std::string kp = m.path(kind);
  const std::vector<std::string_view> body(info->keys.begin(), info->keys.end());
  switch (set.kind) {
    case InitialKind::single: {
      MapView s(ctx, m.get(kind), kp, body);
      if (!s.ok()) return;
      if (s.has("theta")) read_value_list(ctx, s.get("theta"), s.path("theta"), u::angle, n, set.theta);
      if (s.has("rate")) read_value_list(ctx, s.get("rate"), s.path("rate"), u::angular_rate, n, set.rate);
      read_out_of_plane(s, spec, false, false, set);
      read_modal_keys(s, spec, false, false, set);
      break;
    }
    case InitialKind::grid:
    case InitialKind::corners: {
      const bool grid = info->shape == StartShape::counted_ranges;
      MapView s(ctx, m.get(kind), kp, body);
      if (!s.ok()) return;
      if (!has_start_key(s))
        ctx.error(s.mark(), kp, "no ranges given",
                  "give 'theta' and/or 'rate' ranges per link, or 'amplitude' (and 'phase') ranges per mode");
      if (s.has("theta")) read_range_list(ctx, s.get("theta"), s.path("theta"), u::angle, n, grid, set.theta);
      if (s.has("rate")) read_range_list(ctx, s.get("rate"), s.path("rate"), u::angular_rate, n, grid, set.rate);
      read_out_of_plane(s, spec, true, grid, set);
      read_modal_keys(s, spec, true, grid, set);
      break;
    }
    case InitialKind::random: {
      MapView s(ctx, m.get(kind), kp, body);
      if (!s.ok()) return;
      read_random_sampling(s, set);
      if (!has_start_key(s))
        ctx.error(s.mark(), kp, "no ranges given",
                  "give 'theta' and/or 'rate' ranges per link, or 'amplitude' (and 'phase') ranges per mode");
      if (s.has("theta")) read_range_list(ctx, s.get("theta"), s.path("theta"), u::angle, n, false, set.theta);
      if (s.has("rate")) read_range_list(ctx, s.get("rate"), s.path("rate"), u::angular_rate, n, false, set.rate);
      read_out_of_plane(s, spec, true, false, set);
      read_modal_keys(s, spec, true, false, set);
      break;
    }
    case InitialKind::ladder: {
      MapView s(ctx, m.get(kind), kp, body);
      if (!s.ok()) return;
      if (s.require("from", "the start to perturb, {theta: [...], rate: [...]}")) {
        MapView f(ctx, s.get("from"), s.path("from"), {"theta", "rate"});
        if (f.ok()) {
          if (f.has("theta")) read_value_list(ctx, f.get("theta"), f.path("theta"), u::angle, n, set.theta);
          if (f.has("rate")) read_value_list(ctx, f.get("rate"), f.path("rate"), u::angular_rate, n, set.rate);
        }
      }
      if (s.has("relative") == s.has("absolute")) {
        ctx.error(s.mark(), kp, "a ladder needs exactly one of 'relative' or 'absolute' perturbations",
                  "write e.g. relative: [1e-3, 1e-5, 1e-7, 1e-9, 1e-11]");
        return;
      }
      set.relative = s.has("relative");
      const std::string key = set.relative ? "relative" : "absolute";
      const YAML::Node steps = s.get(key);
      if (expect_sequence(ctx, steps, s.path(key), "perturbation sizes")) {
        if (steps.size() == 0) ctx.error(steps, s.path(key), "no perturbations given", "give at least one size");
        for (std::size_t i = 0; i < steps.size(); ++i) {
          const auto dim = set.relative ? u::dimensionless : u::angle;
          if (auto v = read_quantity(ctx, steps[i], fmt::format("{}[{}]", s.path(key), i), dim, Bounds::positive()))
            set.steps.push_back(*v);
        }
      }
      if (s.has("link")) {
        set.perturb_link = read_link_ref(ctx, s.get("link"), s.path("link"), spec);
      } else {
        ctx.defaults_filled.push_back(s.path("link"));
      }
      if (set.relative && set.perturb_link >= 0) {
        const auto li = static_cast<std::size_t>(set.perturb_link);
        if (li >= set.theta.size() || set.theta[li].lo == 0)
          ctx.error(s.key_mark("relative"), s.path("relative"),
                    "relative perturbations of a zero angle are all zero",
                    "give a non-zero starting angle for the perturbed link, or use 'absolute'");
      }
      break;
    }
    case InitialKind::equilibrium: {
      MapView s(ctx, m.get(kind).IsNull() ? YAML::Node(YAML::NodeType::Map) : m.get(kind), kp, body);
      if (!s.ok()) return;
      read_equilibrium(m, s, spec, set);
      break;
    }
  }
}

/// cases.search: `false`, `true`, or {evaluations, starts} (the search for the worst case between
/// the samples, checks/worst_search.hpp).
void read_search(const MapView& cases, SearchSpec& search) {
  Context& ctx = cases.ctx();
  if (!cases.has("search")) {
    ctx.defaults_filled.push_back("cases.search");
    return;
  }
  const YAML::Node node = cases.get("search");
  search.mark = mark_of(node);
  if (node.IsScalar()) {
    if (auto c = read_choice(ctx, node, "cases.search", {"true", "false"})) search.enabled = *c == "true";
    return;
  }
  MapView m(ctx, node, "cases.search", {"evaluations", "starts"});
  if (!m.ok()) return;
  if (m.has("evaluations")) {
    if (auto v = read_integer(ctx, m.get("evaluations"), m.path("evaluations"), 1, 100'000))
      search.evaluations = static_cast<int>(*v);
  } else {
    ctx.defaults_filled.push_back(m.path("evaluations"));
  }
  if (m.has("starts")) {
    if (auto v = read_integer(ctx, m.get("starts"), m.path("starts"), 1, 100)) search.starts = static_cast<int>(*v);
  } else {
    ctx.defaults_filled.push_back(m.path("starts"));
  }
  if (search.evaluations < search.starts)
    ctx.error(m.has("evaluations") ? m.get("evaluations") : node, "cases.search.evaluations",
              fmt::format("{} evaluations cannot give each of {} starts a run", search.evaluations, search.starts),
              fmt::format("give at least {} evaluations (one per start), or fewer starts", search.starts));
}

}  // namespace

void read_cases(const MapView& top, Spec& spec, const LoadOptions& options) {
  Context& ctx = top.ctx();
  if (!top.require("cases", "the duration and the initial-condition sets")) return;
  MapView m(ctx, top.get("cases"), "cases", {"duration", "output_rate", "settling_band", "initial", "search"});
  if (!m.ok()) return;
  spec.cases.mark = m.mark();
  if (m.require("duration", "the simulated time per case, e.g. '30 s'"))
    if (auto v = read_quantity(ctx, m.get("duration"), "cases.duration", u::duration, Bounds{0, 7 * 86400.0, true, false}))
      spec.cases.duration = *v;
  read_optional(m, "output_rate", spec.cases.output_rate, u::rate, Bounds{0, 1e5, true, false});
  read_optional(m, "settling_band", spec.cases.settling_band, u::angle, Bounds{0, 3.2, true, false});
  check_sample_cap(m, spec, options);
  read_search(m, spec.cases.search);
  if (!m.require("initial", "a list of initial-condition sets (" + kind_list() + ")")) return;
  const YAML::Node list = m.get("initial");
  if (!expect_sequence(ctx, list, "cases.initial", "initial-condition sets")) return;
  if (list.size() == 0)
    ctx.error(list, "cases.initial", "the list of initial-condition sets is empty", "give at least one set");
  for (std::size_t i = 0; i < list.size(); ++i) {
    InitialSetSpec set;
    const std::size_t before = ctx.diagnostics.size();
    read_initial_set(ctx, list[i], fmt::format("cases.initial[{}]", i), spec, set);
    if (ctx.diagnostics.size() == before) spec.cases.initial.push_back(std::move(set));
  }
  const long total = case_count(spec);
  if (total > options.max_cases)
    ctx.error(list, "cases.initial",
              fmt::format("the case sets give {} cases ({} starts x {} scenarios), more than the cap of {}",
                          total > 1'000'000'000L ? std::string("over 1e9") : std::to_string(total),
                          total / static_cast<long>(std::max<std::size_t>(1, spec.scenarios.size())),
                          spec.scenarios.size(), options.max_cases),
              "reduce grid counts or random counts, or raise the cap with --max-cases N");
}

namespace {
Bounds value_bounds(const LimitKindInfo& info) {
  return {info.range.lo, info.range.hi, info.range.lo_open, info.range.hi_open};
}

/// "'after' belongs to residual_sway only": the kinds that take an option key.
std::string option_owners(bool LimitOptions::*option) {
  std::string all;
  for (const auto& info : limit_kinds())
    if (info.options.*option) all += (all.empty() ? "" : ", ") + std::string(info.key);
  return all;
}

/// Refuses a limit whose kind means nothing for this spec (LimitNeeds): a figure across the travel
/// plane on a planar chain, a boom-frame figure with no slewing scenario.
void check_limit_needs(const MapView& m, const LimitKindInfo& info, const Spec& spec) {
  const bool spatial = spec.motion == Motion::spatial;
  const bool slewing =
      std::any_of(spec.scenarios.begin(), spec.scenarios.end(), [](const ScenarioSpec& s) { return s.slew.has_value(); });
  if (info.needs == LimitNeeds::spatial && !spatial)
    m.ctx().error(m.key_mark(info.key), m.path(info.key),
                  fmt::format("'{}' reads the sway or load across the travel plane, which a planar chain does not have",
                              info.key),
                  "add 'motion: spatial' at the top of the spec, or remove this limit");
  if (info.needs == LimitNeeds::slewing && !slewing)
    m.ctx().error(m.key_mark(info.key), m.path(info.key),
                  fmt::format("'{}' is read in the frame of a slewing boom, and no scenario slews", info.key),
                  spatial ? "use pivot_load_x or pivot_load_z (the ground frame), or add a scenario with 'slew'"
                          : "use pivot_load_x (the ground frame), or add 'motion: spatial' and a scenario with 'slew'");
}
}  // namespace

void read_limits(const MapView& top, Spec& spec) {
  Context& ctx = top.ctx();
  if (!top.has("limits")) return;
  const YAML::Node list = top.get("limits");
  if (!expect_sequence(ctx, list, "limits", "limits")) return;
  std::vector<std::string_view> keys{"link", "after", "horizon", "end"};
  for (const auto& info : limit_kinds()) keys.push_back(info.key);
  for (std::size_t i = 0; i < list.size(); ++i) {
    const std::string path = fmt::format("limits[{}]", i);
    MapView m(ctx, list[i], path, keys);
    if (!m.ok()) continue;
    const LimitKindInfo* found = nullptr;
    int count = 0;
    for (const auto& info : limit_kinds())
      if (m.has(info.key)) {
        found = &info;
        ++count;
      }
    if (count != 1) {
      std::string all;
      for (const auto& info : limit_kinds()) all += (all.empty() ? "" : ", ") + std::string(info.key);
      ctx.error(m.mark(), path, count == 0 ? "no limit kind given" : "more than one limit kind in one entry",
                "give exactly one of: " + all);
      continue;
    }
    check_limit_needs(m, *found, spec);
    LimitSpec limit;
    limit.kind = found->kind;
    limit.key = std::string(found->key);
    limit.mark = m.mark();
    if (auto v = read_quantity(ctx, m.get(found->key), m.path(found->key), found->dim, value_bounds(*found)))
      limit.value = *v;
    if (m.has("link")) {
      if (found->scope == LimitScope::chain)
        ctx.error(m.key_mark("link"), m.path("link"), fmt::format("'{}' applies to the whole chain", found->key),
                  "remove 'link' from this limit");
      else
        limit.link = read_link_ref(ctx, m.get("link"), m.path("link"), spec);
    }
    const bool ropes = found->scope == LimitScope::rope_links || found->scope == LimitScope::elastic_rope_links;
    if (found->scope == LimitScope::elastic_rope_links) {
      bool any_elastic = false;
      for (const auto& l : spec.links) any_elastic |= l.kind == LinkKind::rope && l.elastic.has_value();
      if (limit.link >= 0 && spec.links[static_cast<std::size_t>(limit.link)].kind == LinkKind::rope &&
          !spec.links[static_cast<std::size_t>(limit.link)].elastic)
        ctx.error(m.get("link"), m.path("link"),
                  fmt::format("rope '{}' is inextensible, so it cannot go slack",
                              spec.links[static_cast<std::size_t>(limit.link)].name),
                  "give the rope an elastic: section, or name an elastic rope");
      else if (!m.has("link") && !any_elastic && !spec.links.empty())
        ctx.error(m.mark(), path, fmt::format("no rope is elastic, so there is nothing for '{}' to check", found->key),
                  "give a rope an elastic: section, or remove this limit");
    }
    if (ropes && limit.link >= 0 &&
        spec.links[static_cast<std::size_t>(limit.link)].kind != LinkKind::rope)
      ctx.error(m.get("link"), m.path("link"),
                fmt::format("link '{}' is not a rope", spec.links[static_cast<std::size_t>(limit.link)].name),
                "name a link of kind: rope, or set that link's kind to rope");
    if (ropes && !m.has("link")) {
      bool any_rope = false;
      for (const auto& l : spec.links) any_rope |= l.kind == LinkKind::rope;
      if (!any_rope && !spec.links.empty())
        ctx.error(m.mark(), path, "no link is of kind rope, so there is no rope tension to check",
                  "set kind: rope on the rope links or remove this limit");
    }
    if (m.has("end")) {
      if (!found->options.end)
        ctx.error(m.key_mark("end"), m.path("end"), fmt::format("'end' belongs to {} only", option_owners(&LimitOptions::end)),
                  "remove it");
      else if (auto k = read_choice(ctx, m.get("end"), m.path("end"), {"either", "top", "bottom"}))
        limit.end = *k == "top" ? RopeEnd::top : *k == "bottom" ? RopeEnd::bottom : RopeEnd::either;
      // The bottom end of the last link is free: there must be a rope with a link below it.
      bool any_bottom = false;
      for (std::size_t k = 0; k + 1 < spec.links.size(); ++k)
        any_bottom |= spec.links[k].kind == LinkKind::rope && (limit.link < 0 || limit.link == static_cast<int>(k));
      if (limit.end == RopeEnd::bottom && !any_bottom && !spec.links.empty())
        ctx.error(m.get("end"), m.path("end"),
                  "the bottom end of the last link hangs free (no tension to check)",
                  "use end: top, or name a rope link that has a link below it");
    }
    if (m.has("after")) {
      if (!found->options.after)
        ctx.error(m.key_mark("after"), m.path("after"),
                  fmt::format("'after' belongs to {} only", option_owners(&LimitOptions::after)), "remove it");
      else if (auto v = read_quantity(ctx, m.get("after"), m.path("after"), u::duration, Bounds::non_negative())) {
        limit.after = *v;
        if (spec.cases.duration > 0 && limit.after >= spec.cases.duration)
          ctx.error(m.get("after"), m.path("after"), "the residual window starts after the end of the run",
                    fmt::format("give a time below cases.duration ({})", u::format_si(spec.cases.duration, u::duration)));
      }
    } else if (found->options.after) {
      ctx.error(m.mark(), m.path("after"), "missing required key 'after'",
                "add 'after: ' with the time from which the sway must stay within the limit, e.g. '20 s'");
    }
    if (m.has("horizon")) {
      if (!found->options.horizon)
        ctx.error(m.key_mark("horizon"), m.path("horizon"),
                  fmt::format("'horizon' belongs to {} only", option_owners(&LimitOptions::horizon)), "remove it");
      else if (auto v = read_quantity(ctx, m.get("horizon"), m.path("horizon"), u::duration, Bounds::positive()))
        limit.horizon = *v;
    } else if (found->options.horizon) {
      limit.horizon = spec.cases.duration;
      ctx.defaults_filled.push_back(m.path("horizon"));
    }
    spec.limits.push_back(limit);
  }
}

namespace {
/// Upper end of the allowed range of the value a sizing path addresses, where the loader has one
/// (damper exponent in (0, 2], friction mu in [0, 2], link length and mass); +inf otherwise.
double sizing_upper_bound(const Spec& spec, const SpecPath& path) {
  if (path.field == SpecPath::Field::damper_exponent || path.field == SpecPath::Field::friction_mu) return 2;
  // A centre of mass must stay on its link (0 <= com <= length); a sized length is checked per design.
  if (path.field == SpecPath::Field::com) return spec.links[static_cast<std::size_t>(path.index)].length;
  if (path.field == SpecPath::Field::length) return kMaxLinkLength;
  if (path.field == SpecPath::Field::mass) return kMaxLinkMass;
  return std::numeric_limits<double>::infinity();
}

/// A design variable that `size` could not use although its path names a value of the spec: the
/// same value as an earlier variable, or a damper's saturation torque the spec does not give (sizing
/// it would add a saturation the design does not have). Reported at the variable's path.
void check_sizing_target(Context& ctx, const Spec& spec, const SpecPath& target, const YAML::Node& node,
                         const std::string& path,
                         const std::vector<std::pair<SpecPath, std::string>>& earlier) {
  for (const auto& [other, other_path] : earlier)
    if (other.field == target.field && other.index == target.index && other.damper == target.damper) {
      ctx.error(node, path,
                fmt::format("this addresses the same value as the earlier variable '{}'", other_path),
                "give each spec value at most one design variable: remove or merge this one");
      return;
    }
  if (target.field == SpecPath::Field::damper_max_torque) {
    const LinkSpec& link = spec.links[static_cast<std::size_t>(target.index)];
    const auto d = static_cast<std::size_t>(target.damper);
    if (d < link.pivot.dampers.size() && !std::isfinite(link.pivot.dampers[d].max_torque))
      ctx.error(
          node, path,
          fmt::format("link '{}' has a damper without max_torque{}, so sizing it would add a saturation the "
                      "design does not have",
                      link.name, link.pivot.dampers.size() > 1 ? fmt::format(" (dampers[{}])", d) : ""),
          fmt::format(
              "give links[{}].pivot.damper.max_torque (the design's saturation torque) to size it, or "
              "remove this variable",
              link.name));
  }
}

/// The objective {min: KIND[, link]} must be computable by `size`: a whole-chain kind takes no link,
/// and residual_sway, ftle_max and onset_margin need their limit (with the same link) in the spec,
/// which sets the time after which sway counts or switches the computation on.
void check_objective_limit(Context& ctx, const MapView& objective, const Spec& spec, const SizingSpec& s) {
  const LimitKindInfo* info = find_limit_kind(s.metric);
  if (!info) return;
  if (objective.has("link") && info->scope == LimitScope::chain) {
    ctx.error(objective.key_mark("link"), objective.path("link"),
              fmt::format("'{}' applies to the whole chain", info->key), "remove 'link' from the objective");
    return;
  }
  if (!info->objective_needs_limit) return;
  for (const auto& l : spec.limits)
    if (l.kind == info->kind && l.link == s.metric_link) return;
  ctx.error(
      objective.get("min"), objective.path("min"),
      fmt::format("the objective {{min: {}}} needs a {} limit{} in 'limits'", info->key, info->key,
                  s.metric_link >= 0 ? " for the same link" : ""),
      info->options.after
          ? fmt::format("add a limit {{{}: VALUE, after: TIME{}}}: it gives the time after which "
                        "sway counts",
                        info->key, s.metric_link >= 0 ? ", link: NAME" : "")
          : fmt::format("add a limit {{{}: VALUE}}: it switches its computation on", info->key));
}
}  // namespace

namespace {
/// chaos.onset.max: the largest start amplitude searched, above 0 and below 180 deg (a start at
/// 180 deg is the inverted rest position).
void read_onset_max(const MapView& onset, ChaosSpec& c) {
  if (!onset.has("max")) {
    onset.ctx().defaults_filled.push_back(onset.path("max"));
    return;
  }
  const auto v = read_quantity(onset.ctx(), onset.get("max"), onset.path("max"), u::angle);
  if (!v) return;
  if (!(*v > 0 && *v < std::numbers::pi))
    onset.ctx().error(onset.get("max"), onset.path("max"),
                      fmt::format("{} is out of range", u::format_si(*v, u::angle)),
                      "give an amplitude above 0 and below 180 deg (pi rad), e.g. 170 deg");
  else
    c.onset_max = *v;
}
}  // namespace

namespace {
/// chaos.rate_weight and chaos.direction: the norm and the initial direction of the FTLE's
/// separation vector.
void read_ftle_norm(const MapView& m, Spec& spec) {
  Context& ctx = m.ctx();
  ChaosSpec& c = spec.chaos;
  read_optional(m, "rate_weight", c.rate_weight, u::duration, Bounds::positive());
  if (!m.has("direction")) return;
  MapView d(ctx, m.get("direction"), "chaos.direction", {"theta", "rate"});
  if (!d.ok()) return;
  const std::size_t n = spec.links.size();
  std::vector<double> direction(2 * n, 0.0);
  bool any = false;
  for (const auto& [key, offset] : {std::pair{"theta", std::size_t{0}}, std::pair{"rate", n}}) {
    if (!d.has(key) || !expect_sequence(ctx, d.get(key), d.path(key), "one number per link")) continue;
    const YAML::Node list = d.get(key);
    if (list.size() > n)
      ctx.error(list, d.path(key), fmt::format("{} numbers for {} links", list.size(), n),
                "give at most one number per link, top link first (missing ones are 0)");
    for (std::size_t i = 0; i < list.size() && i < n; ++i)
      if (auto v = read_quantity(ctx, list[i], fmt::format("{}[{}]", d.path(key), i), u::dimensionless,
                                 Bounds{-1e6, 1e6, false, false})) {
        direction[offset + i] = *v;
        any |= *v != 0;
      }
  }
  if (!any)
    ctx.error(d.mark(), "chaos.direction", "the direction is zero",
              "give at least one non-zero component under theta or rate (it is normalised in the FTLE's norm)");
  else
    c.direction = std::move(direction);
}
}  // namespace

void read_chaos(const MapView& top, Spec& spec) {
  Context& ctx = top.ctx();
  ChaosSpec& c = spec.chaos;
  for (const auto& l : spec.limits)
    if (l.kind == LimitKind::ftle_max && c.horizon == 0) c.horizon = l.horizon;
  if (!top.has("chaos")) {
    if (c.horizon == 0) c.horizon = spec.cases.duration;
    c.onset_direction.assign(spec.links.size(), 1.0);
    for (const char* key : {"separation", "renormalise", "horizon", "uncertainty", "tolerance", "threshold",
                            "onset.direction", "onset.max", "onset.resolution"})
      ctx.defaults_filled.push_back(std::string("chaos.") + key);
    return;
  }
  MapView m(ctx, top.get("chaos"), "chaos",
            {"separation", "renormalise", "horizon", "rate_weight", "direction", "uncertainty", "tolerance", "threshold",
             "onset", "map"});
  if (!m.ok()) return;
  c.given = true;
  c.mark = m.mark();
  read_optional(m, "separation", c.separation, u::dimensionless, Bounds{1e-14, 1e-3, false, false});
  read_optional(m, "renormalise", c.renormalise, u::duration, Bounds::positive());
  if (m.has("horizon")) {
    if (auto v = read_quantity(ctx, m.get("horizon"), "chaos.horizon", u::duration, Bounds::positive())) c.horizon = *v;
  } else {
    if (c.horizon == 0) c.horizon = spec.cases.duration;  // else an ftle_max limit's horizon
    ctx.defaults_filled.push_back("chaos.horizon");
  }
  read_ftle_norm(m, spec);
  read_optional(m, "uncertainty", c.uncertainty, u::angle, Bounds::positive());
  read_optional(m, "tolerance", c.tolerance, u::angle, Bounds::positive());
  read_optional(m, "threshold", c.threshold, u::rate, Bounds::any());
  if (c.uncertainty >= c.tolerance && m.has("tolerance"))
    ctx.error(m.get("tolerance"), "chaos.tolerance", "the tolerance must exceed the initial uncertainty",
              "give a tolerance larger than chaos.uncertainty");
  if (m.has("onset")) {
    MapView o(ctx, m.get("onset"), "chaos.onset", {"direction", "max", "resolution"});
    if (o.ok()) {
      if (o.has("direction") && expect_sequence(ctx, o.get("direction"), "chaos.onset.direction", "weights per link")) {
        const YAML::Node d = o.get("direction");
        if (d.size() > spec.links.size())
          ctx.error(d, "chaos.onset.direction", "more weights than links", "give at most one weight per link");
        double largest = 0;
        for (std::size_t i = 0; i < d.size() && i < spec.links.size(); ++i)
          if (auto v = read_quantity(ctx, d[i], fmt::format("chaos.onset.direction[{}]", i), u::dimensionless,
                                     Bounds{-1, 1, false, false})) {
            c.onset_direction.push_back(*v);
            largest = std::max(largest, std::fabs(*v));
          }
        if (!c.onset_direction.empty() && largest != 1.0)
          ctx.error(d, "chaos.onset.direction", "the largest weight must be 1 (or -1)",
                    "scale the direction so its largest component is 1; amplitudes are that link's angle");
      }
      read_onset_max(o, c);
      read_optional(o, "resolution", c.onset_resolution, u::angle, Bounds::positive());
    }
  }
  if (m.has("map")) {
    MapView mp(ctx, m.get("map"), "chaos.map", {"theta"});
    if (mp.ok() && mp.require("theta", "two ranges [[low, high, count], [low, high, count]] for the first two links")) {
      std::vector<Range> ranges;
      read_range_list(ctx, mp.get("theta"), "chaos.map.theta", u::angle, spec.links.size(), true, ranges);
      if (ranges.size() != 2 || spec.links.size() < 2)
        ctx.error(mp.get("theta"), "chaos.map.theta", "the map needs two ranges and a chain of at least two links",
                  "give [[low, high, count], [low, high, count]] for links 0 and 1");
      else {
        c.map = true;
        c.map_x = ranges[0];
        c.map_y = ranges[1];
      }
    }
  }
  if (!m.has("onset"))
    for (const char* key : {"chaos.onset.direction", "chaos.onset.max", "chaos.onset.resolution"})
      ctx.defaults_filled.push_back(key);
  if (c.onset_direction.empty()) {
    c.onset_direction.assign(spec.links.size(), 1.0);
    if (m.has("onset")) ctx.defaults_filled.push_back("chaos.onset.direction");
  }
  for (std::size_t i = 0; i < spec.limits.size(); ++i)
    if (spec.limits[i].kind == LimitKind::ftle_max && spec.limits[i].horizon != c.horizon && m.has("horizon"))
      ctx.error(m.get("horizon"), "chaos.horizon",
                fmt::format("the FTLE horizon {} differs from limits[{}]'s horizon {}", u::format_si(c.horizon, u::duration),
                            i, u::format_si(spec.limits[i].horizon, u::duration)),
                "the FTLE is computed once per case: give one horizon (or leave chaos.horizon out)");
}

namespace {
/// Records the sizing keys left out (the variables' costs and budget.seconds are recorded where
/// they are read).
void note_sizing_defaults(const MapView& m) {
  auto& filled = m.ctx().defaults_filled;
  for (const char* key : {"objective", "seed", "mode"})
    if (!m.has(key)) filled.push_back(m.path(key));
  const YAML::Node budget = m.get("budget");
  bool evaluations = false;
  if (budget.IsDefined() && budget.IsMap())
    for (auto it = budget.begin(); it != budget.end(); ++it)
      evaluations |= it->first.Scalar() == "evaluations";
  if (!evaluations) filled.push_back("sizing.budget.evaluations");
  if (!m.has("budget")) filled.push_back("sizing.budget.seconds");
}
}  // namespace

void read_sizing(const MapView& top, Spec& spec) {
  Context& ctx = top.ctx();
  if (!top.has("sizing")) return;
  MapView m(ctx, top.get("sizing"), "sizing",
            {"variables", "objective", "budget", "seed", "mode", "required_margin", "search_in_screening"});
  if (!m.ok()) return;
  SizingSpec s;
  s.mark = m.mark();
  std::vector<std::pair<SpecPath, std::string>> targets;  // of the variables read so far
  if (m.require("variables", "a list of design variables {path, range, cost}") &&
      expect_sequence(ctx, m.get("variables"), "sizing.variables", "design variables")) {
    const YAML::Node list = m.get("variables");
    if (list.size() == 0) ctx.error(list, "sizing.variables", "no design variables given", "give at least one");
    for (std::size_t i = 0; i < list.size(); ++i) {
      const std::string path = fmt::format("sizing.variables[{}]", i);
      MapView v(ctx, list[i], path, {"path", "range", "cost", "catalogue", "step"});
      if (!v.ok()) continue;
      SizingVariableSpec var;
      var.mark = v.mark();
      std::optional<SpecPath> target;
      if (v.require("path", "the spec value to vary, e.g. links[hook].pivot.damper.coefficient"))
        if (auto p = read_string(ctx, v.get("path"), v.path("path"))) {
          var.path = *p;
          std::string why;
          target = parse_spec_path(spec, *p, why);
          if (!target)
            ctx.error(v.get("path"), v.path("path"), fmt::format("'{}' does not name a value of this spec: {}", *p, why),
                      "see specs/README.md, 'sizing', for the paths that can be varied");
          else {
            check_sizing_target(ctx, spec, *target, v.get("path"), v.path("path"), targets);
            targets.emplace_back(*target, *p);
          }
        }
      const u::Dim dim = target ? spec_path_dim(*target) : u::dimensionless;
      if (v.has("range") == v.has("catalogue")) {
        ctx.error(v.mark(), path, "a design variable needs exactly one of 'range' or 'catalogue'",
                  "give range: [low, high] or catalogue: [value, value, ...]");
      } else if (v.has("range") && target) {
        const YAML::Node r = v.get("range");
        if (!r.IsSequence() || r.size() != 2) {
          ctx.error(r, v.path("range"), "expected [low, high]", "write e.g. range: [0.5 kN m s/rad, 20 kN m s/rad]");
        } else {
          auto lo = read_quantity(ctx, r[0], v.path("range") + "[0]", dim);
          auto hi = read_quantity(ctx, r[1], v.path("range") + "[1]", dim);
          if (lo && hi) {
            bool open = false;
            const double floor = spec_path_lower_bound(*target, open);
            const double ceiling = sizing_upper_bound(spec, *target);
            if (!(*lo < *hi))
              ctx.error(r, v.path("range"), "the range is empty or inverted", "write [low, high] with low < high");
            else if (open ? !(*lo > floor) : !(*lo >= floor))
              ctx.error(r[0], v.path("range") + "[0]", "the range reaches values the spec does not allow",
                        fmt::format("keep the low end {} {}", open ? ">" : ">=", u::format_si(floor, dim)));
            else if (*hi > ceiling)
              ctx.error(r[1], v.path("range") + "[1]", "the range reaches values the spec does not allow",
                        fmt::format("keep the high end <= {}", u::format_si(ceiling, dim)));
            var.lo = *lo;
            var.hi = *hi;
          }
        }
      } else if (v.has("catalogue") && target &&
                 expect_sequence(ctx, v.get("catalogue"), v.path("catalogue"), "values that can be bought")) {
        const YAML::Node c = v.get("catalogue");
        if (c.size() == 0) ctx.error(c, v.path("catalogue"), "the catalogue is empty", "list at least one value");
        bool open = false;
        const double floor = spec_path_lower_bound(*target, open);
        const double ceiling = sizing_upper_bound(spec, *target);
        for (std::size_t k = 0; k < c.size(); ++k) {
          const std::string cp = fmt::format("{}[{}]", v.path("catalogue"), k);
          const Bounds allowed{floor, ceiling < 1e300 ? ceiling : 1e300, open, false};
          if (auto x = read_quantity(ctx, c[k], cp, dim, allowed)) var.catalogue.push_back(*x);
        }
        std::sort(var.catalogue.begin(), var.catalogue.end());
        if (!var.catalogue.empty()) {
          var.lo = var.catalogue.front();
          var.hi = var.catalogue.back();
        }
      }
      read_optional(v, "cost", var.cost, u::dimensionless, Bounds::non_negative());
      if (v.has("step") && target) {
        if (v.has("catalogue")) {
          ctx.error(v.get("step"), v.path("step"), "a catalogue variable takes its values from the catalogue",
                    "drop 'step', or give a range instead of the catalogue");
        } else if (auto st = read_quantity(ctx, v.get("step"), v.path("step"), dim, Bounds::positive())) {
          var.step = *st;
          // The rounded value must stay in the range: at least one multiple of the step in it.
          if (var.hi > var.lo && !(std::ceil(var.lo / var.step - 1e-9) * var.step <= var.hi * (1 + 1e-12)))
            ctx.error(
                v.get("step"), v.path("step"),
                fmt::format("no multiple of the step {} lies in the range", u::format_si(var.step, dim)),
                "give a smaller step or a wider range");
        }
      }
      s.variables.push_back(var);
    }
  }
  if (m.has("objective")) {
    const YAML::Node o = m.get("objective");
    if (o.IsMap()) {
      MapView om(ctx, o, "sizing.objective", {"min", "link"});
      if (om.ok() && om.require("min", "the limit kind whose worst value is minimised, e.g. peak_angle")) {
        std::vector<std::string_view> names;
        for (const auto& info : limit_kinds()) names.push_back(info.key);
        if (auto k = read_choice(ctx, om.get("min"), om.path("min"), names)) s.metric = *k;
        if (om.has("link")) s.metric_link = read_link_ref(ctx, om.get("link"), om.path("link"), spec);
        s.objective = Objective::min_metric;
        check_objective_limit(ctx, om, spec, s);
      }
    } else if (auto k = read_string(ctx, o, "sizing.objective")) {
      // Every form of the objective, so the fix names the map form too.
      const std::vector<std::string_view> scalars{"min_cost", "max_margin"};
      if (*k == "min_cost" || *k == "max_margin") {
        s.objective = *k == "min_cost" ? Objective::min_cost : Objective::max_margin;
      } else {
        const std::string guess = nearest(*k, scalars);
        ctx.error(o, "sizing.objective", fmt::format("'{}' is not an objective", *k),
                  (guess.empty() ? std::string() : fmt::format("did you mean '{}'? ", guess)) +
                      "the forms are: min_cost (least total cost of the variables), max_margin (largest margin to "
                      "the limits), or {min: LIMIT_KIND} with an optional link: LINK (least worst value of that "
                      "limit kind, e.g. {min: peak_angle, link: hook})");
      }
    }
  }
  if (m.has("budget")) {
    MapView b(ctx, m.get("budget"), "sizing.budget", {"evaluations", "seconds"});
    if (b.ok()) {
      if (b.has("evaluations"))
        if (auto e = read_integer(ctx, b.get("evaluations"), b.path("evaluations"), 1, 1'000'000))
          s.max_evaluations = static_cast<int>(*e);
      read_optional(b, "seconds", s.max_seconds, u::duration, Bounds::positive());
    }
  }
  if (m.has("seed"))
    if (auto e = read_integer(ctx, m.get("seed"), "sizing.seed", 0, 1LL << 53)) s.seed = static_cast<std::uint64_t>(*e);
  if (m.has("mode"))
    if (auto k = read_choice(ctx, m.get("mode"), "sizing.mode", {"local", "global"}))
      s.mode = *k == "local" ? SearchMode::local : SearchMode::global;
  read_optional(m, "required_margin", s.required_margin, u::dimensionless,
                Bounds{0, 0.5, false, true, "a share of each limit, e.g. 0.05 for 5%"});
  if (m.has("search_in_screening"))
    if (auto c = read_choice(ctx, m.get("search_in_screening"), "sizing.search_in_screening", {"true", "false"}))
      s.search_in_screening = *c == "true";
  note_sizing_defaults(m);
  spec.sizing = std::move(s);
}

namespace {
/// RKF78's error estimate (the difference of its 7th- and 8th-order solutions, which share all but
/// the end-point weights) does not see the error made across the steep tanh of regularised friction
/// or the kink of a power-law or saturating damper: measured on a two-link chain with both, its
/// error stayed 100x above Dormand-Prince 5(4)'s at equal tolerance and fell only 4x for a 100x
/// tighter one (tests/integrate/test_convergence.cpp). Such specs are refused, not run.
void refuse_rkf78_on_rough_forces(Context& ctx, const YAML::Node& node, const Spec& spec) {
  std::vector<std::string> rough;
  for (const auto& link : spec.links) {
    const PivotSpec& p = link.pivot;
    const bool friction = p.friction && (p.friction->torque > 0 || p.friction->mu * p.friction->pin_radius > 0);
    bool nonlinear = false;
    for (const DamperSpec& d : p.dampers) nonlinear |= d.exponent != 1 || std::isfinite(d.max_torque);
    if (friction || nonlinear)
      rough.push_back(fmt::format("'{}' ({})", link.name,
                                  friction && nonlinear ? "friction and a power-law or saturating damper"
                                  : friction            ? "friction"
                                                        : "a power-law or saturating damper"));
  }
  if (rough.empty()) return;
  std::string list;
  for (const auto& r : rough) list += (list.empty() ? "" : ", ") + r;
  ctx.error(node, "solver.method",
            fmt::format("rkf78 does not converge reliably with regularised friction or power-law / saturating "
                        "dampers; the pivot of {} has them",
                        list),
            "use `method: dopri5` (the default), whose error estimate follows these force laws");
}
}  // namespace

namespace {
/// The report's title defaults to the spec's name (also when given empty); every report key left out
/// is recorded.
void note_report_defaults(Context& ctx, const MapView& top, Spec& spec) {
  const YAML::Node report = top.get("report");
  const auto given = [&](const char* key) {
    if (!report.IsDefined() || !report.IsMap()) return false;
    for (auto it = report.begin(); it != report.end(); ++it)
      if (it->first.Scalar() == key) return true;
    return false;
  };
  if (spec.report.title.empty()) {
    spec.report.title = spec.name;
    ctx.defaults_filled.push_back("report.title");
  }
  for (const char* key : {"project", "revision", "prepared_by", "paper"})
    if (!given(key)) ctx.defaults_filled.push_back(std::string("report.") + key);
}
}  // namespace

namespace {
/// The same refusal for force laws that sizing would make rough: a design variable on a damper
/// exponent, or on a friction value whose range reaches above zero. Every design `size` tries is
/// re-loaded, and the loader would refuse it with rkf78 half-way through the search.
void refuse_rkf78_on_sized_rough_forces(Context& ctx, const YAML::Node& node, const Spec& spec) {
  if (!spec.sizing) return;
  std::vector<std::string> rough;
  for (const auto& v : spec.sizing->variables) {
    std::string why;
    const auto target = parse_spec_path(spec, v.path, why);
    if (!target) continue;
    const auto f = target->field;
    const bool exponent = f == SpecPath::Field::damper_exponent && (v.lo != 1 || v.hi != 1);
    const bool friction = (f == SpecPath::Field::friction_torque || f == SpecPath::Field::friction_mu ||
                           f == SpecPath::Field::friction_pin_radius) &&
                          v.hi > 0;
    if (exponent || friction) rough.push_back("'" + v.path + "'");
  }
  if (rough.empty()) return;
  std::string list;
  for (const auto& r : rough) list += (list.empty() ? "" : ", ") + r;
  ctx.error(node, "solver.method",
            fmt::format(
                "rkf78 does not converge reliably with regularised friction or power-law dampers, and sizing "
                "{} would give the designs them",
                list),
            "use `method: dopri5` (the default), or size other values");
}
}  // namespace

void read_solver_and_report(const MapView& top, Spec& spec) {
  Context& ctx = top.ctx();
  if (top.has("solver")) {
    MapView m(ctx, top.get("solver"), "solver", {"method", "rtol", "atol", "max_steps", "min_step", "max_seconds"});
    if (m.ok()) {
      if (m.has("method")) {
        if (auto k = read_choice(ctx, m.get("method"), "solver.method", {"dopri5", "rkf78"}))
          spec.solver.method = *k == "dopri5" ? Stepper::dopri5 : Stepper::rkf78;
        if (spec.solver.method == Stepper::rkf78) refuse_rkf78_on_rough_forces(ctx, m.get("method"), spec);
        if (spec.solver.method == Stepper::rkf78)
          refuse_rkf78_on_sized_rough_forces(ctx, m.get("method"), spec);
      } else {
        ctx.defaults_filled.push_back("solver.method");
      }
      read_optional(m, "rtol", spec.solver.rtol, u::dimensionless, Bounds{1e-15, 0.1, false, false});
      read_optional(m, "atol", spec.solver.atol, u::dimensionless, Bounds{1e-16, 0.1, false, false});
      if (m.has("max_steps")) {
        if (auto e = read_integer(ctx, m.get("max_steps"), "solver.max_steps", 100, 1'000'000'000))
          spec.solver.max_steps = static_cast<long>(*e);
      } else {
        ctx.defaults_filled.push_back("solver.max_steps");
      }
      read_optional(m, "min_step", spec.solver.min_step, u::duration, Bounds{0, 1, true, false});
      read_optional(m, "max_seconds", spec.solver.max_seconds, u::duration, Bounds::positive());
    }
  } else {
    for (const char* key : {"method", "rtol", "atol", "max_steps", "min_step", "max_seconds"})
      ctx.defaults_filled.push_back(std::string("solver.") + key);
  }
  if (top.has("report")) {
    MapView m(ctx, top.get("report"), "report", {"title", "project", "revision", "prepared_by", "paper"});
    if (m.ok()) {
      for (auto [key, field] : {std::pair{"title", &spec.report.title}, {"project", &spec.report.project},
                                {"revision", &spec.report.revision}, {"prepared_by", &spec.report.prepared_by}})
        if (m.has(key))
          if (auto s = read_string(ctx, m.get(key), m.path(key))) *field = *s;
      if (m.has("paper"))
        if (auto k = read_choice(ctx, m.get("paper"), "report.paper", {"a4", "letter"}))
          spec.report.paper = *k == "a4" ? Paper::a4 : Paper::letter;
    }
  }
  note_report_defaults(ctx, top, spec);
}

}  // namespace spec_detail
}  // namespace swaybound
