#pragma once
// Private helpers of the spec loader: typed reads from yaml-cpp nodes that record every problem
// as a Diagnostic (file:line:col, key path, message, fix) instead of stopping at the first one.
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <yaml-cpp/yaml.h>

#include "swaybound/core/error.hpp"
#include "swaybound/core/units.hpp"

namespace swaybound::spec_detail {

Mark mark_of(const YAML::Node& node);

/// Collects diagnostics and the list of defaulted keys while a spec is read.
struct Context {
  std::string file;
  std::vector<Diagnostic> diagnostics;
  std::vector<std::string> defaults_filled;
  /// Map values that are null (`key:` with nothing after it) and the position of their key. yaml-cpp
  /// gives an empty value the position of the next token, often the next key several lines down,
  /// so errors about such a value are reported at its key instead.
  std::vector<std::pair<YAML::Node, Mark>> null_value_keys;

  void error(Mark mark, std::string path, std::string message, std::string fix = {});
  void error(const YAML::Node& node, std::string path, std::string message, std::string fix = {});
};

/// Levenshtein distance, for "did you mean" suggestions.
std::size_t edit_distance(std::string_view a, std::string_view b);
/// The closest candidate to `word`, or "" if none is close enough to be a plausible typo.
std::string nearest(std::string_view word, const std::vector<std::string_view>& candidates);

/// A YAML map checked against its allowed keys: reports a non-map, duplicate keys and unknown keys
/// (with the nearest valid key), then gives access to the values by key.
class MapView {
 public:
  MapView(Context& ctx, const YAML::Node& node, std::string path,
          std::vector<std::string_view> allowed);
  bool ok() const { return ok_; }
  bool has(std::string_view key) const;
  /// The value node, or an undefined node when the key is absent.
  YAML::Node get(std::string_view key) const;
  Mark key_mark(std::string_view key) const;
  std::string path(std::string_view key) const;
  const std::string& path() const { return path_; }
  Mark mark() const { return mark_; }
  Context& ctx() const { return *ctx_; }

  /// Requires a key: reports it missing (at the map's own position) and returns false.
  bool require(std::string_view key, std::string_view what) const;

 private:
  Context* ctx_;
  std::string path_;
  Mark mark_;
  bool ok_ = false;
  std::vector<std::pair<std::string, YAML::Node>> entries_;
  std::vector<Mark> key_marks_;  ///< position of each entry's key
};

/// Allowed closed/open bounds for a number, in SI.
struct Bounds {
  double lo = -1e300, hi = 1e300;
  bool lo_open = false, hi_open = false;
  std::string_view why = {};  ///< said after the range in the fix line, e.g. why the range ends there
  static Bounds positive() { return {0, 1e300, true, false}; }
  static Bounds non_negative() { return {0, 1e300, false, false}; }
  static Bounds any() { return {}; }
};

/// Reports a YAML tag on `node` (`!metres 6`, `!!float 6`): the loader reads no tags, so a tag would
/// be silently dropped. Returns false after reporting.
bool check_no_tag(Context& ctx, const YAML::Node& node, const std::string& path);

/// Reads a quantity of dimension `dim` and checks it lies within `bounds`. A bare number is SI,
/// except where the unit holds an angle (units::angle_unit_required): there it must carry a unit
/// unless it is 0.
std::optional<double> read_quantity(Context& ctx, const YAML::Node& node, const std::string& path,
                                    const units::Dim& dim, const Bounds& bounds = Bounds::any());
std::optional<std::string> read_string(Context& ctx, const YAML::Node& node, const std::string& path);
std::optional<long long> read_integer(Context& ctx, const YAML::Node& node, const std::string& path,
                                      long long lo, long long hi);
/// Reads one of `choices`; reports the nearest choice on a typo.
std::optional<std::string> read_choice(Context& ctx, const YAML::Node& node, const std::string& path,
                                       const std::vector<std::string_view>& choices);
/// Checks the node is a sequence (reports otherwise).
bool expect_sequence(Context& ctx, const YAML::Node& node, const std::string& path,
                     std::string_view what);

/// Convenience: read `key` of `map` into `out` if present, else record `out` as defaulted.
void read_optional(const MapView& map, std::string_view key, double& out, const units::Dim& dim,
                   const Bounds& bounds = Bounds::any());

}  // namespace swaybound::spec_detail
