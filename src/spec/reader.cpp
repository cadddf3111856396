#include "reader.hpp"

#include "swaybound/spec/loader.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::spec_detail {

Mark mark_of(const YAML::Node& node) {
  if (!node.IsDefined()) return {};
  const YAML::Mark m = node.Mark();
  if (m.is_null()) return {};
  return {m.line + 1, m.column + 1};
}

void Context::error(Mark mark, std::string path, std::string message, std::string fix) {
  diagnostics.push_back({mark, std::move(path), std::move(message), std::move(fix)});
}

void Context::error(const YAML::Node& node, std::string path, std::string message,
                    std::string fix) {
  Mark mark = mark_of(node);
  if (node.IsDefined() && node.IsNull())
    for (const auto& [value, key_mark] : null_value_keys)
      if (value.is(node)) {
        mark = key_mark;
        break;
      }
  error(mark, std::move(path), std::move(message), std::move(fix));
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diagonal = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t above = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diagonal = above;
    }
  }
  return row[b.size()];
}

std::string nearest(std::string_view word, const std::vector<std::string_view>& candidates) {
  std::string best;
  std::size_t best_distance = std::max<std::size_t>(2, word.size() / 3) + 1;
  for (auto c : candidates) {
    const std::size_t d = edit_distance(word, c);
    if (d < best_distance) {
      best_distance = d;
      best = std::string(c);
    }
  }
  return best;
}

namespace {
std::string join(const std::vector<std::string_view>& items) {
  std::string out;
  for (auto s : items) {
    if (!out.empty()) out += ", ";
    out += s;
  }
  return out;
}

std::string node_kind(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Null: return "nothing (null)";
    case YAML::NodeType::Scalar: return fmt::format("the value '{}'", node.Scalar());
    case YAML::NodeType::Sequence: return "a list";
    case YAML::NodeType::Map: return "a map";
    default: return "nothing";
  }
}
}  // namespace

bool check_no_tag(Context& ctx, const YAML::Node& node, const std::string& path) {
  if (!node.IsDefined()) return true;
  std::string tag = node.Tag();
  // "?" is an untagged plain value, "!" an untagged quoted one; anything else was written.
  if (tag.empty() || tag == "?" || tag == "!") return true;
  constexpr std::string_view core = "tag:yaml.org,2002:";
  if (tag.rfind(core, 0) == 0) tag = "!!" + tag.substr(core.size());
  if (node.IsScalar())
    ctx.error(node, path,
              fmt::format("the YAML tag '{}' is not read by swaybound: the value would be read as '{}' without it",
                          tag, node.Scalar()),
              fmt::format("remove '{}'; a unit goes after the number, e.g. '6 m'", tag));
  else
    ctx.error(node, path, fmt::format("the YAML tag '{}' is not read by swaybound", tag),
              fmt::format("remove '{}'", tag));
  return false;
}

MapView::MapView(Context& ctx, const YAML::Node& node, std::string path,
                 std::vector<std::string_view> allowed)
    : ctx_(&ctx), path_(std::move(path)), mark_(mark_of(node)) {
  if (!check_no_tag(ctx, node, path_)) return;
  if (!node.IsMap()) {
    ctx.error(node, path_, fmt::format("expected a map of keys, got {}", node_kind(node)),
              fmt::format("write it as a map with keys from: {}", join(allowed)));
    return;
  }
  ok_ = true;
  for (auto it = node.begin(); it != node.end(); ++it) {
    const YAML::Node key = it->first;
    if (!key.IsScalar()) {
      ctx.error(key, path_, "a key must be a plain word", "allowed keys: " + join(allowed));
      continue;
    }
    const std::string& name = key.Scalar();
    const auto dup = std::find_if(entries_.begin(), entries_.end(),
                                  [&](const auto& e) { return e.first == name; });
    if (dup != entries_.end()) {
      ctx.error(key, this->path(name),
                fmt::format("duplicate key '{}' (first given at line {})", name,
                            key_marks_[static_cast<std::size_t>(dup - entries_.begin())].line),
                "give each key once; delete or merge the repeated one");
      continue;
    }
    if (std::find(allowed.begin(), allowed.end(), name) == allowed.end()) {
      const std::string guess = nearest(name, allowed);
      ctx.error(key, this->path(name), fmt::format("unknown key '{}'", name),
                guess.empty() ? "allowed keys here: " + join(allowed)
                              : fmt::format("did you mean '{}'? allowed keys here: {}", guess,
                                            join(allowed)));
      continue;
    }
    entries_.emplace_back(name, it->second);
    key_marks_.push_back(mark_of(key));
    if (it->second.IsNull()) ctx.null_value_keys.emplace_back(it->second, mark_of(key));
  }
}

bool MapView::has(std::string_view key) const {
  return std::any_of(entries_.begin(), entries_.end(), [&](const auto& e) { return e.first == key; });
}

YAML::Node MapView::get(std::string_view key) const {
  for (const auto& e : entries_)
    if (e.first == key) return e.second;
  return YAML::Node(YAML::NodeType::Undefined);
}

Mark MapView::key_mark(std::string_view key) const {
  for (std::size_t i = 0; i < entries_.size(); ++i)
    if (entries_[i].first == key) return key_marks_[i];
  return mark_;
}

std::string MapView::path(std::string_view key) const {
  return path_.empty() ? std::string(key) : path_ + "." + std::string(key);
}

bool MapView::require(std::string_view key, std::string_view what) const {
  if (!ok_ || has(key)) return ok_;
  ctx_->error(mark_, path(key), fmt::format("missing required key '{}'", key),
              fmt::format("add '{}: ' with {}", key, what));
  return false;
}

namespace {
std::string example_for(const units::Dim& dim) {
  using namespace units;
  if (dim == length) return "'250 mm' or '6 m'";
  if (dim == mass) return "'35 kg' or '8.5 t'";
  if (dim == duration) return "'30 s' or '500 ms'";
  if (dim == angle) return "'15 deg' or '0.2 rad'";
  if (dim == force) return "'120 kN'";
  if (dim == torque) return "'50 N m' or '20 kN m'";
  if (dim == rotary_damping) return "'4 kN m s/rad'";
  if (dim == linear_damping) return "'2 kN s/m'";
  if (dim == speed) return "'12 m/s' or '40 km/h'";
  if (dim == acceleration) return "'0.8 m/s^2'";
  if (dim == jerk) return "'0.5 m/s^3'";
  if (dim == stiffness) return "'3 MN/m'";
  if (dim == moment_of_inertia) return "'950 kg m^2'";
  if (dim == rate) return "'0.05 /s'";
  if (dim == angular_rate) return "'5 deg/s'";
  if (dim == area) return "'3.2 m^2'";
  if (dim == density) return "'1.225 kg/m^3'";
  return "a plain number";
}

std::string describe_bounds(const Bounds& b, const units::Dim& dim) {
  const std::string u = units::si_unit(dim);
  const auto num = [&](double v) { return u.empty() ? fmt::format("{:g}", v) : fmt::format("{:g} {}", v, u); };
  const bool has_lo = b.lo > -1e299, has_hi = b.hi < 1e299;
  if (has_lo && has_hi)
    return fmt::format("a value in {}{}, {}{}", b.lo_open ? "(" : "[", num(b.lo), num(b.hi),
                       b.hi_open ? ")" : "]");
  if (has_lo) return fmt::format("a value {} {}", b.lo_open ? ">" : ">=", num(b.lo));
  if (has_hi) return fmt::format("a value {} {}", b.hi_open ? "<" : "<=", num(b.hi));
  return "a finite value";
}
}  // namespace

std::optional<double> read_quantity(Context& ctx, const YAML::Node& node, const std::string& path,
                                    const units::Dim& dim, const Bounds& bounds) {
  if (!check_no_tag(ctx, node, path)) return std::nullopt;
  if (!node.IsScalar()) {
    ctx.error(node, path, fmt::format("expected {}, got {}", units::a_dim_name(dim), node_kind(node)),
              units::angle_unit_required(dim)
                  ? fmt::format("write a number with its unit, e.g. {}", example_for(dim))
                  : fmt::format("write a number in {} or a string with a unit, e.g. {}",
                                units::si_unit(dim).empty() ? "plain form" : units::si_unit(dim),
                                example_for(dim)));
    return std::nullopt;
  }
  const std::string& text = node.Scalar();
  std::string why;
  const auto q = units::parse_quantity(text, why);
  if (!q) {
    ctx.error(node, path, fmt::format("cannot read '{}' as {}: {}", text, units::a_dim_name(dim), why),
              fmt::format("write a finite number, optionally with a unit, e.g. {}", example_for(dim)));
    return std::nullopt;
  }
  if (q->has_unit && !(q->dim == dim)) {
    ctx.error(node, path,
              fmt::format("expects {}, got '{}' which is {}", units::a_dim_name(dim), text,
                          units::a_dim_name(q->dim)),
              units::angle_unit_required(dim)
                  ? fmt::format("give {} with its unit, e.g. {}", units::a_dim_name(dim), example_for(dim))
                  : fmt::format("give {} (bare numbers are in {}), e.g. {}", units::a_dim_name(dim),
                                units::si_unit(dim).empty() ? "plain form" : units::si_unit(dim),
                                example_for(dim)));
    return std::nullopt;
  }
  if (!q->has_unit && q->value != 0 && units::angle_unit_required(dim)) {
    ctx.error(node, path,
              fmt::format("'{}' has no unit, and {} must say whether it is in deg or rad", text,
                          units::a_dim_name(dim)),
              units::bare_angle_fix(q->value, dim));
    return std::nullopt;
  }
  const double v = q->value;
  const bool below = bounds.lo_open ? !(v > bounds.lo) : !(v >= bounds.lo);
  const bool above = bounds.hi_open ? !(v < bounds.hi) : !(v <= bounds.hi);
  if (below || above) {
    ctx.error(node, path, fmt::format("{} is out of range", units::format_si(v, dim)),
              bounds.why.empty() ? fmt::format("give {}", describe_bounds(bounds, dim))
                                 : fmt::format("give {}: {}", describe_bounds(bounds, dim), bounds.why));
    return std::nullopt;
  }
  if (v != 0 && !std::isnormal(v)) {  // subnormal: below 2.2e-308 in SI, no physical input
    ctx.error(node, path,
              fmt::format("'{}' is {:g} {} in SI, smaller than the smallest normal double (2.2e-308)", text, v,
                          units::si_unit(dim)),
              "give a value of a physical size (a bare number is in SI units)");
    return std::nullopt;
  }
  return v;
}

namespace {
/// A name (a key path ending in "name") holds at most kMaxNameChars characters, other text at most
/// kMaxTextChars; false (and a diagnostic) when `text` is longer.
bool text_within_cap(Context& ctx, const YAML::Node& node, const std::string& path, const std::string& text) {
  const bool name = path == "name" || (path.size() > 5 && path.compare(path.size() - 5, 5, ".name") == 0);
  const std::size_t cap = name ? kMaxNameChars : kMaxTextChars;
  if (text.size() <= cap) return true;  // bytes >= characters
  std::size_t chars = 0;
  for (char c : text) chars += (static_cast<unsigned char>(c) & 0xC0) != 0x80;
  if (chars <= cap) return true;
  ctx.error(node, path,
            fmt::format("{} characters is longer than the {} allowed for {}", chars, cap,
                        name ? "a name" : "this text"),
            fmt::format("shorten it to at most {} characters{}", cap,
                        name ? "; put a longer description in report.title (up to 500)" : ""));
  return false;
}
}  // namespace

std::optional<std::string> read_string(Context& ctx, const YAML::Node& node, const std::string& path) {
  if (!check_no_tag(ctx, node, path)) return std::nullopt;
  if (!node.IsScalar()) {
    ctx.error(node, path, fmt::format("expected text, got {}", node_kind(node)), "write a single line of text");
    return std::nullopt;
  }
  if (!text_within_cap(ctx, node, path, node.Scalar())) return std::nullopt;
  return node.Scalar();
}

std::optional<long long> read_integer(Context& ctx, const YAML::Node& node, const std::string& path,
                                      long long lo, long long hi) {
  const auto fix = fmt::format("give a whole number from {} to {}", lo, hi);
  if (!check_no_tag(ctx, node, path)) return std::nullopt;
  if (!node.IsScalar()) {
    ctx.error(node, path, fmt::format("expected a whole number, got {}", node_kind(node)), fix);
    return std::nullopt;
  }
  std::string why;
  const auto q = units::parse_quantity(node.Scalar(), why);
  if (!q || !(q->dim == units::dimensionless) || q->value != std::floor(q->value)) {
    ctx.error(node, path, fmt::format("'{}' is not a whole number", node.Scalar()), fix);
    return std::nullopt;
  }
  if (q->value < static_cast<double>(lo) || q->value > static_cast<double>(hi)) {
    ctx.error(node, path, fmt::format("{:g} is out of range", q->value), fix);
    return std::nullopt;
  }
  return static_cast<long long>(q->value);
}

std::optional<std::string> read_choice(Context& ctx, const YAML::Node& node, const std::string& path,
                                       const std::vector<std::string_view>& choices) {
  auto s = read_string(ctx, node, path);
  if (!s) return std::nullopt;
  if (std::find(choices.begin(), choices.end(), *s) != choices.end()) return s;
  const std::string guess = nearest(*s, choices);
  ctx.error(node, path, fmt::format("'{}' is not one of the allowed values", *s),
            guess.empty() ? "allowed: " + join(choices)
                          : fmt::format("did you mean '{}'? allowed: {}", guess, join(choices)));
  return std::nullopt;
}

bool expect_sequence(Context& ctx, const YAML::Node& node, const std::string& path, std::string_view what) {
  if (!check_no_tag(ctx, node, path)) return false;
  if (node.IsSequence()) return true;
  ctx.error(node, path, fmt::format("expected a list of {}, got {}", what, node_kind(node)),
            fmt::format("write a YAML list ('- ...' lines or [a, b]) of {}", what));
  return false;
}

void read_optional(const MapView& map, std::string_view key, double& out, const units::Dim& dim,
                   const Bounds& bounds) {
  if (!map.has(key)) {
    map.ctx().defaults_filled.push_back(map.path(key));
    return;
  }
  if (auto v = read_quantity(map.ctx(), map.get(key), map.path(key), dim, bounds)) out = *v;
}

}  // namespace swaybound::spec_detail
