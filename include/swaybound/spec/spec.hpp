#pragma once
// Plain structs of a design spec, all in SI (angles in rad). Built and validated by the loader
// (spec/loader.hpp); nothing past the loader sees YAML or units. `specs/README.md` is the
// reference for every key, its unit, default and allowed range.
#include <array>
#include <cstdint>
#include <limits>
#include <numbers>
#include <optional>
#include <string>
#include <vector>

#include "swaybound/core/error.hpp"

namespace swaybound {

inline constexpr int kSpecFormatVersion = 1;

enum class LinkKind { rigid, rope };

/// Input shapers of a travel drive (model/shaper.hpp): zero vibration, zero vibration and
/// derivative, extra-insensitive.
enum class ShaperKind { zv, zvd, ei };

/// Power-law rotary damper at a pivot: tau = -C w_ref (|w|/w_ref)^alpha sign(w), w_ref = 1 rad/s,
/// so C is the torque per unit rate at 1 rad/s for every alpha (alpha = 1 is a linear damper).
struct DamperSpec {
  double coefficient = 0;     ///< C [N m s/rad]
  double exponent = 1;        ///< alpha in (0, 2]
  double max_torque = std::numeric_limits<double>::infinity();  ///< saturation [N m]
  double linear_below = 1e-3; ///< below this |w| [rad/s] the law is linear (see dynamics docs)
  /// The damper's shaft, a horizontal direction in the trolley (or slewing boom) frame [rad] from
  /// the travel direction +x (a boom's radial direction) towards +z: `along` 0, `across` pi/2
  /// (kDamperAcross). The damper then acts on the swing about its shaft only. Absent: isotropic in
  /// a spatial chain's swing (a planar chain's damper is `across`).
  std::optional<double> axis;
};

/// The shaft direction of a damper `axis: across` [rad] (exactly this value means `across`).
inline constexpr double kDamperAcross = std::numbers::pi / 2;

/// Friction at a pivot: constant Coulomb torque plus load-dependent pin friction
/// mu * pin_radius * |pivot reaction|, both regularised with tanh(w / transition_rate).
struct FrictionSpec {
  double torque = 0;            ///< constant Coulomb torque [N m]
  double pin_radius = 0;        ///< [m]
  double mu = 0;                ///< pin friction coefficient [-]
  double transition_rate = 0.01;///< regularisation rate [rad/s]
};

struct PivotSpec {
  std::optional<FrictionSpec> friction;
  std::vector<DamperSpec> dampers;  ///< rotary dampers acting side by side at the pivot (torques add)
};

/// The axial law of an elastic rope link (see dynamics/rope.hpp): stiffness of the fall
/// k = parts_of_line * EA / ell with ell its unstretched length, tension max(0, k stretch + c stretch rate)
/// while stretched, 0 while slack.
struct RopeElasticSpec {
  double ea = 0;          ///< axial stiffness EA of one part of line [N] (0 when `stiffness` is given)
  double stiffness = 0;   ///< spring rate of the whole fall at the link's length [N/m] (0 when `ea` is given)
  double damping = 0;     ///< axial damping coefficient of the fall [N s/m]
  double damping_ratio = -1;  ///< or: damping ratio of the axial (bounce) mode of the load hanging at rest [-]; -1 = not given
  Mark mark;
};

struct LinkSpec {
  std::string name;
  LinkKind kind = LinkKind::rigid;
  int parts_of_line = 1;   ///< rope: parts of line in the fall (hook speed = drum speed / parts)
  std::optional<RopeElasticSpec> elastic;  ///< rope: elastic and able to go slack; absent = inextensible
  double length = 0;   ///< upper pivot to lower pivot [m]
  double mass = 0;     ///< [kg]
  double com = 0;      ///< centre of mass from the upper pivot, along the link [m]
  double inertia = 0;  ///< about the centre of mass [kg m^2]
  bool com_given = false, inertia_given = false;
  PivotSpec pivot;     ///< the pivot at the link's upper end
  Mark mark;
};

/// Where a dashpot end is attached: a point on a link (distance from its upper pivot along the
/// link) or a point fixed to the moving base (offset from the top pivot, x right, y up).
struct AttachmentSpec {
  int link = -1;        ///< link index, or -1 for the base
  double at = 0;        ///< [m] along the link
  double base_x = 0, base_y = 0;  ///< [m] offset on the base
};

/// Linear axial dashpot between two attachment points: F = -c (d/dt distance) along the line.
struct DashpotSpec {
  std::string name;
  AttachmentSpec from, to;
  double coefficient = 0;  ///< [N s/m]
  Mark mark;
};

/// Quadratic drag on a point of a link from a horizontal wind:
/// F = 1/2 rho Cd A |u - v| (u - v), u = (speed + gust, 0).
struct WindSpec {
  int link = 0;
  double at = 0;               ///< point on the link [m] from its upper pivot (default: com)
  bool at_given = false;
  double speed = 0;            ///< steady wind [m/s], + is towards +x (planar) or along `direction`
  double direction = 0;        ///< spatial chains: the way it blows in the horizontal plane, from +x towards +z [rad]
  double drag_area = 0;        ///< A [m^2]
  double drag_coefficient = 0; ///< Cd [-]
  double air_density = 1.225;  ///< rho [kg/m^3] (ISO 2533 standard sea-level air)
  struct Gust {
    double start = 0, duration = 0, speed = 0;  ///< [s], [s], extra speed [m/s]
  };
  std::optional<Gust> gust;
  Mark mark;
};

/// One segment of piecewise-constant base (top pivot) acceleration.
struct AccelSegment {
  double duration = 0;  ///< [s]
  double ax = 0, ay = 0;///< [m/s^2]
  double az = 0;        ///< across the travel (spatial chains only) [m/s^2]
};

/// One speed command (a drum's or a travel drive's): from `at`, change the speed to `to` with
/// |acceleration| <= accel and |jerk| <= jerk (0: no jerk limit). A drum's speed is rope speed at
/// the drum, + hauls in (hoists); a travel drive's is the base's speed along x.
struct DrumMoveSpec {
  double at = 0, to = 0, accel = 0, jerk = 0;  ///< [s], [m/s], [m/s^2], [m/s^3]
  Mark mark;
};

/// Hoisting or lowering during a scenario: the drum of one rope link. The rope's length (its
/// unstretched length if it is elastic) is ell(t) = length - s(t) / parts_of_line, s the rope
/// hauled in at the drum since t = 0.
struct HoistSpec {
  int link = -1;              ///< the rope link the drum winds
  double initial_speed = 0;   ///< drum speed at t = 0 [m/s], + hauls in
  std::vector<DrumMoveSpec> moves;
  Mark mark;
};

/// A load that starts resting on the ground and is lifted off by the rope (see dynamics/rope.hpp):
/// the links below the lowest elastic rope are held at rest until the rope carries their weight.
struct LiftOffSpec {
  double slack = 0;  ///< rope slack at t = 0 (unstretched length minus the distance it spans) [m]
  Mark mark;
};

/// A continuous value of a scenario known only within a range (base.scenarios[i].uncertain): the
/// sampled cases use the spec's value; the search for the worst case (checks/worst_search.hpp) also
/// moves it through the range. spec/paths.hpp parses `path` (parse_uncertain_path).
struct UncertainSpec {
  std::string path;       ///< as written, relative to the scenario, e.g. "accel[0].x", "wind.speed"
  double lo = 0, hi = 0;  ///< the range, SI; the spec's value lies in it
  Mark mark;
};

struct ScenarioSpec {
  std::string name;
  double initial_vx = 0, initial_vy = 0;  ///< base velocity at t = 0 [m/s]
  double initial_vz = 0;                  ///< across the travel (spatial chains only) [m/s]
  std::vector<AccelSegment> accel;        ///< after the last segment the base acceleration is 0
  std::optional<HoistSpec> hoist;         ///< drum motion; absent = rope lengths stay fixed
  /// The base's travel along x as a drive's speed commands (instead of `accel` and the x part of
  /// the initial velocity): speed at t = 0 [m/s] and moves with acceleration and jerk limits.
  struct Travel {
    double initial_speed = 0;
    std::vector<DrumMoveSpec> moves;
    /// The moves convolved with an input shaper designed for one mode (model/shaper.hpp).
    struct Shaper {
      ShaperKind kind = ShaperKind::zv;
      double frequency = 0;              ///< design frequency [Hz] (from the mode when `mode` > 0)
      double damping_ratio = 0;          ///< [-], in [0, 1) (from the mode when `mode` > 0 and not given)
      double vibration_tolerance = 0.05; ///< EI only [-], in (0, 1)
      /// Designed from a mode of `modes` (1-based, lowest first; 0: frequency given): frequency, and
      /// damping_ratio unless `damping_given`, are set by resolve_shaper_modes (modal/shaper_modes.hpp)
      /// whenever the chain changes, of the chain with `design_for`'s values when given.
      int mode = 0;
      bool damping_given = true;
      struct DesignFor {
        std::string link;  ///< as written
        std::optional<double> length, mass;  ///< [m], [kg]: the link's values for the design only
        Mark mark, link_mark;
      };
      std::optional<DesignFor> design_for;
      Mark mark, mode_mark;
    };
    std::optional<Shaper> shaper;
    /// An emergency or service stop: at `at` the drive leaves its (shaped) command and stops at
    /// `decel`, jerk-limited when jerk > 0.
    struct Stop {
      double at = 0, decel = 0, jerk = 0;  ///< [s], [m/s^2], [m/s^3]
      Mark mark;
    };
    std::optional<Stop> stop;
    /// Feedback anti-sway (model/controller.hpp): the drive's acceleration from the measured sway
    /// of one link and the speed error, saturated at accel_limit. Planar chains only.
    struct Controller {
      int measure = -1;         ///< the measured link (default: the lowest)
      double angle_gain = 0;    ///< k_p [m/s^2 per rad]
      double rate_gain = 0;     ///< k_d [m/s^2 per rad/s], >= 0
      double speed_gain = 0;    ///< k_v [1/s], >= 0
      double accel_limit = 0;   ///< [m/s^2], > 0 (default: the largest accel of the moves and the stop)
      Mark mark;
    };
    std::optional<Controller> controller;
    Mark mark;
  };
  std::optional<Travel> travel;
  /// Spatial chains: the base's travel across (along z) as a drive, keys as `travel`'s (the z part of
  /// the initial velocity and of `accel` instead).
  std::optional<Travel> cross_travel;
  /// Spatial chains: the top pivot on a boom slewing about a vertical axis at `radius` from it,
  /// its slewing speed [rad/s] given as speed moves (rad/s, rad/s^2, rad/s^3), instead of `accel`,
  /// `initial_velocity` and `travel`. The axis is at (-radius, 0, 0), so the pivot starts at the
  /// origin and a positive slewing speed moves it towards +z.
  struct Slew {
    double radius = 0;        ///< [m]
    double initial_rate = 0;  ///< [rad/s]
    std::vector<DrumMoveSpec> moves;
    /// Luffing (slew.luff; loader_luff.cpp): the pivot's radius changes. Without `boom` (radial
    /// luffing) the speed profile is the radius's rate [m/s], + outwards, `radius` the radius at
    /// t = 0. With `boom` [m] (a boom of that length luffing about a foot on the slewing arm) it is
    /// the boom angle's rate [rad/s] from `angle` (above the horizontal) at t = 0, + raises the boom;
    /// the foot is at radius - boom cos(angle), the tip at foot + boom cos(beta(t)) and
    /// boom (sin beta(t) - sin angle) above its start.
    struct Luff {
      double initial_speed = 0;  ///< [m/s] radial, [rad/s] boom angle
      std::vector<DrumMoveSpec> moves;
      double boom = 0;           ///< boom length [m]; 0: radial luffing
      double angle = 0;          ///< boom angle at t = 0 [rad], in (-pi/2, pi/2)
      Mark mark, speed_mark;     ///< the `luff` key; its `speed` key (the `luff` key when not given)
    };
    std::optional<Luff> luff;
    std::optional<Travel::Shaper> shaper;  ///< as a travel drive's, on the slewing speed
    std::optional<Travel::Stop> stop;      ///< decel [rad/s^2], jerk [rad/s^3]
    Mark mark;
  };
  std::optional<Slew> slew;
  std::optional<LiftOffSpec> lift_off;    ///< the load starts on the ground
  std::vector<UncertainSpec> uncertain;   ///< values the worst-case search moves through a range
  Mark mark;
};

/// A range per link for an initial-condition set; `count` is only used by grids.
struct Range {
  double lo = 0, hi = 0;
  int count = 1;
};

/// The start quantities of an initial set in their order as dimensions of the case space: theta,
/// rate, phi, phi_rate (each a list per link), then the modal amplitude and phase (each a list per
/// mode), then an equilibrium's sampled steady acceleration and wind speed (at most one range
/// each); any of them possibly empty.
struct InitialSetSpec;
inline constexpr std::size_t kStartLists = 8;
std::array<const std::vector<Range>*, kStartLists> start_lists(const InitialSetSpec& set);

/// `equilibrium`: the chain hanging still under a steady base acceleration and wind
/// (dynamics/equilibrium.hpp); one start per scenario, or per sampled value when either is a range.
enum class InitialKind { single, grid, random, corners, ladder, equilibrium };
enum class SamplingMethod { uniform, latin_hypercube };

/// One initial-condition set. Angles are absolute link angles [rad], rates [rad/s]; a link not
/// listed starts at 0. For a ladder, `theta`/`rate` hold the base start and `steps` the
/// perturbations applied to `perturb_link`'s angle.
struct InitialSetSpec {
  InitialKind kind = InitialKind::single;
  std::string name;                ///< label used in case ids (defaults to the kind)
  std::vector<Range> theta, rate;  ///< per link (single and ladder use lo only)
  std::vector<Range> phi, phi_rate;  ///< spatial chains: out-of-plane angles and rates per link
  int count = 0;                   ///< random
  std::uint64_t seed = 0;          ///< random
  SamplingMethod method = SamplingMethod::uniform;
  std::vector<double> steps;       ///< ladder perturbations
  bool relative = true;            ///< ladder: steps relative to the base angle, else absolute [rad]
  int perturb_link = 0;            ///< ladder
  /// Modal starts (single, grid, corners, random; planar chains): per mode, lowest first, the
  /// amplitude of its largest link angle [rad] and its phase [rad] (modal/modal_start.hpp).
  std::vector<Range> amplitude, phase;
  /// equilibrium: the steady horizontal base acceleration [m/s^2], or (accel_from_scenario) each
  /// scenario's base acceleration at t = 0; the steady speed of every wind load [m/s], or
  /// (wind_from_spec) each wind load's own steady speed.
  bool accel_from_scenario = true;
  double accel = 0;
  bool wind_from_spec = true;
  double wind_speed = 0;
  /// equilibrium sampled over ranges: the steady acceleration [m/s^2] and wind speed [m/s] as at
  /// most one range each (given, they replace `accel` / `wind_speed`), and how they are sampled:
  /// grid (ranges with counts), random (count, seed, method) or single (no range).
  std::vector<Range> accel_range, wind_range;
  InitialKind sampling = InitialKind::single;
  Mark mark;
};

/// The search for the worst case between the samples (cases.search; checks/worst_search.hpp).
struct SearchSpec {
  bool enabled = true;   ///< `search: false` switches it off
  int evaluations = 40;  ///< case runs per per-case limit, shared by its starts
  int starts = 3;        ///< worst sampled cases each search starts from
  Mark mark;
};

struct CasesSpec {
  double duration = 0;            ///< [s]
  double output_rate = 50;        ///< samples per second for recorded time series [1/s]
  double settling_band = 0.017453292519943295;  ///< |theta| band for the settling time [rad] (1 deg)
  std::vector<InitialSetSpec> initial;
  SearchSpec search;
  Mark mark;
};

enum class LimitKind {
  peak_angle,        ///< |theta_link| [rad]
  relative_angle,    ///< |theta_link - theta_above| at the link's upper pivot [rad]
  peak_rate,         ///< |omega_link| [rad/s]
  pivot_load,        ///< |reaction| at the link's upper pivot [N]
  dynamic_factor,    ///< peak / static pivot load [-]
  horizontal_support_force,  ///< |horizontal force of the chain on its support| (trolley, boom tip) [N]
  rope_tension_min,  ///< lowest rope tension [N] (lower bound)
  rope_tension_max,  ///< largest tension of a rope's fall [N]
  line_pull,         ///< largest tension of a rope's fall / its parts of line [N]
  slack_time,        ///< total time an elastic rope is slack [s]
  snatch_load,       ///< largest tension of an elastic rope after it first went slack [N]
  residual_sway,     ///< largest |theta| after `after` [rad]
  ftle_max,          ///< largest finite-time Lyapunov exponent over `horizon` [1/s]
  modal_damping_min, ///< least modal damping ratio [-] (lower bound)
  onset_margin,      ///< chaotic-onset amplitude / largest start amplitude [-] (lower bound)
  in_plane_sway,     ///< |sway in the travel plane, or the boom's plane when slewing| [rad]
  out_of_plane_sway, ///< |sway across that plane| [rad] (spatial chains)
  pivot_load_x,      ///< |x component of the pivot reaction| (ground frame, along the travel) [N]
  pivot_load_z,      ///< |z component| (ground frame, across the travel; spatial chains) [N]
  pivot_load_vertical,    ///< |vertical component| [N]
  pivot_load_radial,      ///< |radial component| (boom frame; a slewing scenario) [N]
  pivot_load_tangential,  ///< |tangential component| (boom frame; a slewing scenario) [N]
};

/// Which end of a rope link a rope_tension_min limit reads: the top end is what the sheave or
/// the pivot above sees; the bottom end is where the link below hangs.
enum class RopeEnd { either, top, bottom };

struct LimitSpec {
  LimitKind kind{};
  std::string key;      ///< the key as written, e.g. "peak_angle"
  double value = 0;     ///< SI
  int link = -1;        ///< -1: every link the limit applies to
  double after = 0;     ///< residual_sway [s]
  double horizon = 0;   ///< ftle_max [s]
  RopeEnd end = RopeEnd::either;  ///< rope_tension_min: the least of both ends, or one end
  Mark mark;
};

/// Chaotic-onset settings. FTLE: Benettin renormalisation of a nearby trajectory.
struct ChaosSpec {
  double separation = 1e-8;       ///< initial separation d0 of the nearby trajectory [-]
  double renormalise = 0.5;       ///< renormalisation interval [s]
  double horizon = 0;             ///< FTLE horizon [s]; 0 = the ftle_max limit's, else cases.duration
  double rate_weight = 0;         ///< weight T of the rates in the separation norm [s]; 0 = sqrt(total length / g)
  std::vector<double> direction;  ///< initial separation direction, angles then rates (2N) [-]; empty = equal
  double uncertainty = 1.7453292519943295e-4;  ///< initial uncertainty for the predictability horizon [rad] (0.01 deg)
  double tolerance = 0.017453292519943295;     ///< tolerated deviation for the predictability horizon [rad] (1 deg)
  double threshold = 0.05;        ///< FTLE above which motion counts as chaotic [1/s]
  std::vector<double> onset_direction;  ///< start angles per link along which onset is searched [-] (max 1)
  double onset_max = 2.9670597283903604;   ///< largest amplitude searched [rad] (170 deg)
  double onset_resolution = 0.008726646259971648;  ///< bisection resolution [rad] (0.5 deg)
  bool map = false;               ///< compute the FTLE map over the first two links' angles
  Range map_x{-2.0943951023931953, 2.0943951023931953, 21};  ///< link 0 angle range and count
  Range map_y{-2.0943951023931953, 2.0943951023931953, 21};  ///< link 1 angle range and count
  bool given = false;             ///< the spec has a chaos section
  Mark mark;
};

enum class Objective { min_cost, min_metric, max_margin };
enum class SearchMode { local, global };

struct SizingVariableSpec {
  std::string path;       ///< as written: links[hook].pivot.damper.coefficient
  double lo = 0, hi = 0;  ///< SI
  double cost = 1;        ///< weight per SI unit of the variable
  std::vector<double> catalogue;  ///< allowed values (SI); empty = continuous
  double step = 0;                ///< continuous: the final value is a multiple of this (SI); 0 = not rounded
  Mark mark;
};

struct SizingSpec {
  std::vector<SizingVariableSpec> variables;
  Objective objective = Objective::min_cost;
  std::string metric;      ///< min_metric: the limit key whose worst value is minimised
  int metric_link = -1;
  int max_evaluations = 300;
  double max_seconds = 600;
  std::uint64_t seed = 1;
  SearchMode mode = SearchMode::local;
  /// Every limit must hold with this share to spare: margin >= required_margin x the limit's
  /// constraint scale (|limit|, or for a limit of 0 the scale of its dimension), in [0, 0.5).
  double required_margin = 0;
  /// Screening and the verification rounds also search for the worst case between the samples
  /// (checks/worst_search.hpp); false: only the final check does.
  bool search_in_screening = false;
  Mark mark;
};

enum class Stepper { dopri5, rkf78 };

struct SolverSpec {
  Stepper method = Stepper::dopri5;
  double rtol = 1e-8, atol = 1e-10;
  long max_steps = 2'000'000;  ///< per case
  double min_step = 1e-12;     ///< [s] a step below this is a step-size collapse
  double max_seconds = 60;     ///< wall-clock budget per case [s]
};

enum class Paper { a4, letter };

struct ReportSpec {
  std::string title, project, revision, prepared_by;
  Paper paper = Paper::a4;
};

/// Planar: every link swings in the x-y plane (one angle per link). Spatial: each link hangs from a
/// spherical pivot and swings in any direction (x along the travel, y up, z = x cross y across it).
enum class Motion { planar, spatial };

struct Spec {
  int version = kSpecFormatVersion;
  std::string name;
  Motion motion = Motion::planar;
  std::string source_file;   ///< the path the spec was read from
  std::string source_text;   ///< the bytes the loader parsed (empty for a spec built in memory)
  double gravity = 9.80665;  ///< [m/s^2] standard gravity (CGPM 1901), default
  std::vector<LinkSpec> links;
  std::vector<DashpotSpec> dashpots;
  std::vector<WindSpec> wind;
  std::vector<ScenarioSpec> scenarios;  ///< never empty after loading ("still" when none given)
  CasesSpec cases;
  std::vector<LimitSpec> limits;
  ChaosSpec chaos;
  std::optional<SizingSpec> sizing;
  SolverSpec solver;
  ReportSpec report;
  std::vector<std::string> defaults_filled;  ///< key paths whose value came from a default
  /// The values apply_design (sizing/design.hpp) set last, one per sizing variable in order; empty
  /// for a spec as loaded. The spec is source_text loaded and then these applied: what another
  /// process of a distributed run rebuilds it from (checks/case_farm.hpp).
  std::vector<double> design_values;

  /// Index of the link of that name, -1 if absent. Names that differ only in what cannot be seen
  /// (invisible characters, spaces at the ends, composed or decomposed accents) match.
  int link_index(const std::string& link_name) const;
};

}  // namespace swaybound
