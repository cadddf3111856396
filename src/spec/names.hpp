#pragma once
// Private to the spec loader: checks on the names of links, scenarios and dashpots, which other
// keys refer to by name. A name must show what it is: names that render alike must be equal.
//
// What is caught: a name that is empty once spaces and invisible characters are removed; a control
// character (U+0000..U+001F, U+007F..U+009F, e.g. a NUL from "\0"); an invisible or format
// character (soft hyphen U+00AD, combining grapheme joiner U+034F, Arabic letter mark U+061C,
// U+180E, zero-width and direction marks U+200B..U+200F, line and paragraph separators
// U+2028/U+2029, embeddings and overrides U+202A..U+202E, U+2060..U+2064, isolates U+2066..U+2069,
// byte-order mark U+FEFF). Two names are the same name when they are equal after removing those
// characters, folding Unicode spaces (no-break, en, em, thin, ideographic, ...) to a plain space,
// trimming spaces at both ends, and writing every Latin letter with accents in one canonical form
// (precomposed U+00C0..U+024F and U+1E00..U+1EFF decomposed into base letter + combining marks
// U+0300..U+036F, the marks in canonical order), so "café" typed with U+00E9 and with e U+0301
// are one name.
//
// What is not caught: canonical equivalents outside those Latin ranges (Greek with tonos, Hangul
// syllables, ...), compatibility forms (the ligature U+FB01 against "fi", full-width letters),
// look-alike letters of other scripts (Cyrillic U+0430 against Latin a), and case.
#include <string>
#include <string_view>

namespace swaybound::spec_detail {

struct NameProblem {
  std::string message;  ///< empty when the name is usable
  std::string fix;
};

/// What makes `name` unusable as the name of a `what` ("link", "scenario", "dashpot"): empty after
/// trimming, a control character or an invisible character (with its code point and position).
NameProblem name_problem(std::string_view name, std::string_view what);

/// The form in which names are compared (see the top of this file), as UTF-8.
std::string name_key(std::string_view name);

}  // namespace swaybound::spec_detail
