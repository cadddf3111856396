#include "swaybound/checks/case_wire.hpp"

#include <cstdint>
#include <cstring>
#include <type_traits>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"

namespace swaybound {

namespace {

// A field added to CaseMetrics (or to InitialState or Extreme) must be added to `fields` below, or
// a distributed run would hand the checks a default value for it: this size check stops the build
// until it is. Update the sizes with the list (they hold for libstdc++ on x86-64, the build CI runs).
#if defined(__x86_64__) && defined(__GLIBCXX__)
static_assert(sizeof(CaseMetrics) == 872 && sizeof(InitialState) == 168 && sizeof(Extreme) == 16,
              "a field was added to CaseMetrics, InitialState or Extreme: add it to fields() in case_wire.cpp");
#endif

constexpr std::uint32_t kMagic = 0x53424331;  // "SBC1": the layout below, version 1

class Writer {
 public:
  explicit Writer(std::string& out) : out_(out) {}
  template <class T>
  void scalar(const T& v) {
    static_assert(std::is_trivially_copyable_v<T>);
    out_.append(reinterpret_cast<const char*>(&v), sizeof v);
  }
  void field(const double& v) { scalar(v); }
  void field(const long& v) { scalar(v); }
  void field(const int& v) { scalar(v); }
  void field(const RunStatus& v) { scalar(static_cast<std::int32_t>(v)); }
  void field(const Extreme& e) {
    scalar(e.value);
    scalar(e.time);
  }
  void field(const std::string& s) {
    scalar(static_cast<std::uint64_t>(s.size()));
    out_.append(s);
  }
  template <class T>
  void field(const std::vector<T>& v) {
    scalar(static_cast<std::uint64_t>(v.size()));
    for (const T& x : v) field(x);
  }

 private:
  std::string& out_;
};

class Reader {
 public:
  explicit Reader(std::string_view in) : in_(in) {}
  template <class T>
  void scalar(T& v) {
    static_assert(std::is_trivially_copyable_v<T>);
    need(sizeof v);
    std::memcpy(&v, in_.data() + at_, sizeof v);
    at_ += sizeof v;
  }
  void field(double& v) { scalar(v); }
  void field(long& v) { scalar(v); }
  void field(int& v) { scalar(v); }
  void field(RunStatus& v) {
    std::int32_t s;
    scalar(s);
    if (s < 0 || s > static_cast<std::int32_t>(RunStatus::mode_chatter))
      throw RunError(fmt::format("case bytes: unknown run status {}", s));
    v = static_cast<RunStatus>(s);
  }
  void field(Extreme& e) {
    scalar(e.value);
    scalar(e.time);
  }
  void field(std::string& s) {
    const std::uint64_t n = count(1);
    s.assign(in_.data() + at_, n);
    at_ += n;
  }
  template <class T>
  void field(std::vector<T>& v) {
    v.resize(count(8));  // every element type here takes at least 8 bytes
    for (T& x : v) field(x);
  }
  /// A length prefix, checked against the bytes left (each element takes at least `least` bytes).
  std::uint64_t count(std::size_t least) {
    std::uint64_t n;
    scalar(n);
    if (n > (in_.size() - at_) / least) throw RunError(fmt::format("case bytes: a length of {} runs past the end", n));
    return n;
  }

 private:
  void need(std::size_t n) const {
    if (in_.size() - at_ < n) throw RunError("case bytes: they end in the middle of a case");
  }
  std::string_view in_;
  std::size_t at_ = 0;
};

/// Every field of a case, in one order for writing and reading.
template <class Io, class Metrics>
void fields(Io& io, Metrics& m) {
  io.field(m.index);
  io.field(m.id);
  io.field(m.scenario);
  io.field(m.set);
  io.field(m.initial.theta);
  io.field(m.initial.omega);
  io.field(m.initial.phi);
  io.field(m.initial.phi_rate);
  io.field(m.initial.rope_length);
  io.field(m.initial.rope_rate);
  io.field(m.initial.quantities);
  io.field(m.status);
  io.field(m.reason);
  io.field(m.peak_angle);
  io.field(m.peak_relative);
  io.field(m.peak_rate);
  io.field(m.peak_load);
  io.field(m.dynamic_factor);
  io.field(m.min_tension);
  io.field(m.min_tension_top);
  io.field(m.min_tension_bottom);
  io.field(m.peak_rope_force);
  io.field(m.parts_of_line);
  io.field(m.slack_time);
  io.field(m.slack_count);
  io.field(m.snatch);
  io.field(m.switches);
  io.field(m.lift_off_time);
  io.field(m.support_force_x);
  io.field(m.peak_in_plane);
  io.field(m.peak_out_of_plane);
  io.field(m.peak_load_x);
  io.field(m.peak_load_z);
  io.field(m.peak_load_vertical);
  io.field(m.peak_load_radial);
  io.field(m.peak_load_tangential);
  io.field(m.residual);
  io.field(m.settling_time);
  io.field(m.audit_relative);
  io.field(m.boom_audit_relative);
  io.field(m.steps);
  io.field(m.evaluations);
  io.field(m.ftle);
  io.field(m.ftle_note);
}

}  // namespace

void encode_cases(const std::vector<CaseMetrics>& cases, std::string& out) {
  Writer w(out);
  w.scalar(kMagic);
  w.scalar(static_cast<std::uint64_t>(cases.size()));
  for (const CaseMetrics& m : cases) fields(w, m);
}

std::vector<CaseMetrics> decode_cases(std::string_view bytes) {
  Reader r(bytes);
  std::uint32_t magic;
  r.scalar(magic);
  if (magic != kMagic) throw RunError("case bytes: not from this build of swaybound (another layout)");
  std::vector<CaseMetrics> cases(r.count(16));
  for (CaseMetrics& m : cases) fields(r, m);
  return cases;
}

}  // namespace swaybound
