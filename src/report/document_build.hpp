#pragma once
// What the document builders share (internal to src/report): the formatting and block helpers
// and one builder per section. build_document() (document_build.cpp) calls the builders in the
// packet's order; each section family has its own file:
//   document_build_front.cpp      1 title block, 2 scope and assumptions
//   document_build_sizing.cpp     S sizing (a sized design's packet only)
//   document_build_design.cpp     3 design summary
//   document_build_verdict.cpp    4 verdict, with the definitions of its figures
//   document_build_loads.cpp      4 (cont.) loads of the hanging equilibrium
//   document_build_search.cpp     4b the worst case between the samples (when the search ran)
//   document_build_drive.cpp      4c drive and command shaping (when a travel drive has a shaper)
//   document_build_modes.cpp      5 modes
//   document_build_governing.cpp  6 governing cases
//   document_build_ropes.cpp      6 (cont.) rope tension, slack, snatches, hoist
//   document_build_spatial.cpp    6 (cont.) spatial chains: sway by direction, support force by component, plan views
//   document_build_chaos.cpp      7 chaotic onset
//   document_build_envelope.cpp   8 envelope
//   document_build_trust.cpp      9 numerical trust, 10 cautions
#include <numbers>
#include <string>
#include <string_view>
#include <vector>

#include "report_model.hpp"
#include "swaybound/sizing/sizing.hpp"

namespace swaybound::report_doc::build {

inline constexpr double kDeg = 180 / std::numbers::pi;

// --- Text and blocks (document_build.cpp) ----------------------------------------------------

/// v with `digits` significant digits; "-" for NaN, "inf"/"-inf".
std::string num(double v, int digits = 4);
/// A small difference in engineering units with 3 significant digits ("-3.47e-07 deg").
std::string precise(double v, const std::string& unit);
/// A quantity that can run to thousands (a mass, an inertia) in plain digits with thousands
/// separators, never in exponent form: 12000 -> "12,000", 1234.5 -> "1,235", 0.25 -> "0.25".
std::string amount(double v);
/// An angle given in rad, in degrees with `digits` significant digits.
std::string deg(double rad, int digits = 4);

/// A paragraph block.
Block paragraph(Rich text);
Block paragraph(std::string text);
/// A subheading block.
Block subheading(std::string text);
/// A bullet list block.
Block bullets(std::vector<Rich> items);
Block bullets(const std::vector<std::string>& items);
/// A table block.
Block table_block(Table t);
/// One row of figures.
Block figures(std::vector<Figure> f);
/// A highlighted paragraph in `tone`.
Block callout(Rich text, Tone tone);
/// A figure of `height` points taking `share` of the text width.
Figure figure(plot::Plot p, std::string caption, double height, double share = 1);
/// A table column.
Column col(std::string title, double weight, Align align, std::string key, bool note = false);
/// The name of link `link` as the spec gives it.
std::string link_name(const Spec& spec, int link);

// --- Shared by several sections ----------------------------------------------------------------

/// Where a check's worst value occurs: its link and time (document_build_verdict.cpp).
std::string where_text(const Spec& spec, const CheckResult& c);
/// The static-load table, the warnings for load limits the chain breaks at rest, and the force on
/// the trolley or boom tip (document_build_loads.cpp).
void static_load_blocks(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases, std::vector<Block>& out);
/// Every value of v times `factor` (document_build_governing.cpp).
std::vector<double> scaled(const std::vector<double>& v, double factor);
/// Adds a reference line unless the same one is there (document_build_governing.cpp).
void add_ref(std::vector<plot::RefLine>& refs, plot::RefLine r);
/// " (link name)" for a limit on one link, else empty (document_build_governing.cpp).
std::string link_scope(const Spec& spec, const LimitSpec& l);
/// The rope figures of a recorded governing case: per elastic rope the tension of its fall with
/// the slack intervals shaded and the snatch peaks marked; the rope length and drum when the
/// scenario hoists; the contact switches and lift-off (document_build_ropes.cpp). Empty for a case
/// without ropes of variable length.
std::vector<Block> rope_blocks(const Spec& spec, const RecordedCase& rc, const std::string& id);
/// A spatial chain's figures of a recorded governing case: in-plane and out-of-plane sway of each
/// link, and the force on the support by component (document_build_spatial.cpp). Empty for a
/// planar chain.
std::vector<Block> spatial_case_blocks(const Spec& spec, const RecordedCase& rc, const std::string& id);
/// A spatial chain's plan views (top views) of the hook path of every recorded governing case
/// (document_build_spatial.cpp). Empty for a planar chain.
std::vector<Block> plan_view_blocks(const Spec& spec, const CheckReport& r);

// --- One builder per section -------------------------------------------------------------------

Section title_section(const Document& d, const Spec& spec, const CheckReport& r);
Section sizing_section(const Spec& input, const SizingResult& r);
Section scope_section(const Spec& spec, const CheckReport& r, const Document& d);
Section design_section(const Spec& spec, const CheckReport& r);
Section verdict_section(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases);
Section search_section(const Spec& spec, const CheckReport& r);
Section drive_section(const Spec& spec, const CheckReport& r);
Section modal_section(const Spec& spec, const CheckReport& r);
Section governing_section(const Spec& spec, const CheckReport& r);
Section chaos_section(const Spec& spec, const CheckReport& r);
Section envelope_section(const Spec& spec, const CheckReport& r, const std::vector<CaseEnvelopeRow>* cases);
Section trust_section(const Spec& spec, const CheckReport& r);
Section caution_section(const Spec& spec);

}  // namespace swaybound::report_doc::build
