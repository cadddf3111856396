#pragma once
// Private: the parts of the loader, shared between loader.cpp and loader_cases.cpp.
#include "reader.hpp"
#include "swaybound/model/profile.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::spec_detail {

/// Reads a link name and returns its index, or -1 after reporting an unknown name.
int read_link_ref(Context& ctx, const YAML::Node& node, const std::string& path, const Spec& spec);

/// Ranges of the rope keys (specs/README.md, "Limits of the loader").
inline constexpr int kMaxPartsOfLine = 64;
inline constexpr double kMaxRopeEa = 1e12;        ///< N, EA of one part of line
inline constexpr double kMinRopePeriod = 1e-5;    ///< s, the load's bounce on an elastic rope
inline constexpr double kMinHoistedShare = 0.05;  ///< a hoisted rope keeps >= 5% of its length
inline constexpr double kMaxHoistedFactor = 10;   ///< and <= 10 times its length

/// Reads a link's `parts_of_line` and `elastic` (loader_rope.cpp) into `link`, whose kind is read
/// (`kind_read` false when the kind's value was refused); reports them on a link that is not a rope.
void read_rope_keys(const MapView& link_map, bool kind_read, LinkSpec& link);
/// Checks each elastic rope with the links below it: the load's bounce period 2 pi sqrt(m / k) is
/// at least kMinRopePeriod (k the fall's stiffness, m the rope and every link below it) and the
/// static stretch m g / k at most half the rope's length.
void check_elastic_ropes(Context& ctx, const YAML::Node& links_node, const Spec& spec);
/// Reads a scenario's `hoist` and `lift_off` (the links are read).
void read_scenario_rope_keys(const MapView& scenario, const Spec& spec, ScenarioSpec& sc);
/// A speed profile's error as (message, fix) (loader_moves.cpp).
std::pair<std::string, std::string> split_profile_error(const ProfileError& e);
/// Whose speed move: a hoist drum's, a travel drive's (speeds in m/s) or a slewing drive's (rad/s).
enum class MoveOf { drum, travel, slew, cross_travel, luff_radial, luff_boom };
/// Reads one speed move {at, to, accel, jerk} at `path` into `move` (`of` picks the units and the
/// words of the messages); false when it could not be read (loader_moves.cpp).
bool read_drum_move(Context& ctx, const YAML::Node& node, const std::string& path, DrumMoveSpec& move, MoveOf of);
/// Reads a random set's count, seed and sampling method (method defaults to uniform) from `s`.
void read_random_sampling(const MapView& s, InitialSetSpec& set);
/// Times in [0, duration] where a speed profile's position can have an extreme or changes law: 0,
/// the duration, every breakpoint before it and every zero of the speed (loader_rope.cpp).
std::vector<double> profile_check_times(const SpeedProfile& profile, double duration);
/// Reads a speed profile's initial speed (`speed_key`, in the units `of` picks) and its `moves`
/// from `m`, and checks that the moves build a profile (an error names the move); false when
/// something was reported. `what` describes the list for a message, e.g. "drum moves".
bool read_speed_moves(const MapView& m, MoveOf of, std::string_view speed_key, std::string_view what,
                      double& initial_speed, std::vector<DrumMoveSpec>& moves);

/// Reads a scenario's `travel` drive (speed and moves; loader_rope.cpp, which shares the moves'
/// reader with the drum). A scenario with a travel drive gives neither `accel` nor `initial_velocity`.
void read_travel(const MapView& scenario, ScenarioSpec& sc);
/// Reads the travel drive's `controller` (loader_controller.cpp), after read_travel.
void read_travel_controller(const MapView& scenario, const Spec& spec, ScenarioSpec& sc);
/// Reads a drive axis's keys speed, moves, shaper and stop from `t` (`of`: travel and cross travel
/// in m/s, slewing in rad/s) and checks its profile; false when something was reported.
bool read_drive_keys(const MapView& t, MoveOf of, double& initial_speed, std::vector<DrumMoveSpec>& moves,
                     std::optional<ScenarioSpec::Travel::Shaper>& shaper,
                     std::optional<ScenarioSpec::Travel::Stop>& stop);
/// Reads a scenario's `cross_travel` drive (spatial chains; the z parts of `accel` and
/// `initial_velocity` and `slew` refused beside it).
void read_cross_travel(const MapView& scenario, const Spec& spec, ScenarioSpec& sc);
/// Once the links and scenarios are read: resolves the shapers designed from a mode
/// (resolve_shaper_modes) and checks their drives, which read_drive_keys could not.
void check_mode_shapers(Context& ctx, Spec& spec);
/// After cases.duration is read: every hoisted rope's length, length - s(t) / parts_of_line with s
/// the rope the drum hauled in, stays within [kMinHoistedShare, kMaxHoistedFactor] x its length
/// over [0, duration].
void check_hoisted_lengths(Context& ctx, const Spec& spec);
/// After the sizing is read: the two checks above hold at both ends of every sizing range (or
/// catalogue) of a link's length or mass, when the spec has an elastic or a hoisted rope.
void check_sized_ropes(Context& ctx, const YAML::Node& links_node, const Spec& spec);

/// Refuses the FTLE-based indicators (ftle_max and onset_margin limits, a chaos section) for a
/// chain with an elastic rope: the FTLE integrates the chain without the rope's slack/taut
/// switches, so its figure would not describe the rope's motion.
void refuse_ftle_with_elastic_ropes(Context& ctx, const Spec& spec);

/// Spatial chains (loader_spatial.cpp): reads `motion`; reports `key` of `map` (a quantity that is
/// `what`) unless the chain is spatial, and returns whether it is; refuses what a spatial chain
/// does not model yet (elastic ropes, hoists, lift-off, FTLE and modal limits, a chaos section).
void read_motion(const MapView& top, Spec& spec);
bool require_spatial(const MapView& map, std::string_view key, const Spec& spec, std::string_view what);
void refuse_with_spatial(Context& ctx, const Spec& spec);
/// Reads a pivot damper's `axis` (loader_spatial.cpp): `along`, `across` or the shaft's angle from
/// the travel direction towards +z in [-180, 180] deg; a planar chain takes `across` only.
std::optional<double> read_damper_axis(Context& ctx, const YAML::Node& node, const std::string& path, Motion motion);

/// Reads a scenario's `slew` (spatial chains; loader_spatial.cpp): radius and slewing speed moves,
/// instead of `accel`, `initial_velocity` and `travel`.
void read_slew(const MapView& scenario, const Spec& spec, ScenarioSpec& sc);
/// Reads `slew.luff` (loader_luff.cpp) once the slew's radius is read; after cases.duration is
/// read, check_luffing reports a radius that reaches 0 or a boom angle that leaves (-90, 90) deg.
void read_luff(const MapView& slew_map, ScenarioSpec::Slew& slew);
void check_luffing(Context& ctx, const Spec& spec);

/// Reads each scenario's `uncertain` list (loader_uncertain.cpp) once every scenario of the list
/// `scenarios` and the wind are read.
void read_uncertain(Context& ctx, const YAML::Node& scenarios, Spec& spec);
/// Reads a per-link (or per-mode) list of values [10 deg, -5 deg] into `out` (loader_cases.cpp).
void read_value_list(Context& ctx, const YAML::Node& node, const std::string& path, const units::Dim& dim,
                     std::size_t links, std::vector<Range>& out);
/// Reads a per-link (or per-mode) list of ranges: [[lo, hi, n], ...] with counts, [[lo, hi], ...] otherwise.
void read_range_list(Context& ctx, const YAML::Node& node, const std::string& path, const units::Dim& dim,
                     std::size_t links, bool with_count, std::vector<Range>& out);
/// Reads a set's modal coordinates `amplitude` and `phase` (per mode, lowest first; loader_starts.cpp)
/// as values or ranges (`counted`: with counts, for a grid); refused on a spatial chain, with an
/// elastic rope, or beside link angles.
void read_modal_keys(const MapView& s, const Spec& spec, bool ranges, bool counted, InitialSetSpec& set);
/// Reads the body `s` of an `equilibrium` set (`set_map` the set's own map; loader_starts.cpp).
void read_equilibrium(const MapView& set_map, const MapView& s, const Spec& spec, InitialSetSpec& set);

void read_cases(const MapView& top, Spec& spec, const LoadOptions& options);
void read_limits(const MapView& top, Spec& spec);
void read_chaos(const MapView& top, Spec& spec);
void read_sizing(const MapView& top, Spec& spec);
void read_solver_and_report(const MapView& top, Spec& spec);

}  // namespace swaybound::spec_detail
