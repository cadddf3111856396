#include "names.hpp"

#include <algorithm>
#include <cstdint>
#include <vector>

#include <fmt/format.h>

namespace swaybound::spec_detail {

namespace {

struct Decomposition {
  std::uint16_t composed, base, mark;
};
#include "names_data.inc"

/// UTF-8 to code points; a byte that starts no valid sequence becomes U+FFFD (the loader has
/// already refused a file that is not UTF-8, so this happens only for text built in memory).
std::vector<char32_t> decode(std::string_view s) {
  std::vector<char32_t> out;
  for (std::size_t i = 0; i < s.size();) {
    const auto c = static_cast<unsigned char>(s[i]);
    const std::size_t len = c < 0x80           ? 1
                            : (c >> 5) == 0x6  ? 2
                            : (c >> 4) == 0xE  ? 3
                            : (c >> 3) == 0x1E ? 4
                                               : 0;
    if (len == 0 || i + len > s.size()) {
      out.push_back(0xFFFD);
      ++i;
      continue;
    }
    char32_t cp = len == 1 ? c : len == 2 ? (c & 0x1F) : len == 3 ? (c & 0x0F) : (c & 0x07);
    for (std::size_t k = 1; k < len; ++k) cp = (cp << 6) | (static_cast<unsigned char>(s[i + k]) & 0x3F);
    out.push_back(cp);
    i += len;
  }
  return out;
}

std::string encode(const std::vector<char32_t>& cps) {
  std::string out;
  for (char32_t cp : cps) {
    if (cp < 0x80) {
      out += static_cast<char>(cp);
    } else if (cp < 0x800) {
      out += static_cast<char>(0xC0 | (cp >> 6));
      out += static_cast<char>(0x80 | (cp & 0x3F));
    } else if (cp < 0x10000) {
      out += static_cast<char>(0xE0 | (cp >> 12));
      out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (cp & 0x3F));
    } else {
      out += static_cast<char>(0xF0 | (cp >> 18));
      out += static_cast<char>(0x80 | ((cp >> 12) & 0x3F));
      out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (cp & 0x3F));
    }
  }
  return out;
}

bool is_control(char32_t c) {
  return c < 0x20 || (c >= 0x7F && c <= 0x9F);
}

/// Characters that draw nothing (or only change the direction of what follows).
bool is_invisible(char32_t c) {
  return c == 0x00AD || c == 0x034F || c == 0x061C || c == 0x180E || (c >= 0x200B && c <= 0x200F) ||
         c == 0x2028 || c == 0x2029 || (c >= 0x202A && c <= 0x202E) || (c >= 0x2060 && c <= 0x2064) ||
         (c >= 0x2066 && c <= 0x2069) || c == 0xFEFF;
}

/// Spaces other than U+0020 that render as a gap.
bool is_other_space(char32_t c) {
  return c == 0x00A0 || c == 0x1680 || (c >= 0x2000 && c <= 0x200A) || c == 0x202F || c == 0x205F ||
         c == 0x3000;
}

std::string_view invisible_name(char32_t c) {
  switch (c) {
    case 0x00AD:
      return "soft hyphen";
    case 0x200B:
      return "zero-width space";
    case 0x200C:
      return "zero-width non-joiner";
    case 0x200D:
      return "zero-width joiner";
    case 0x200E:
      return "left-to-right mark";
    case 0x200F:
      return "right-to-left mark";
    case 0x2060:
      return "word joiner";
    case 0xFEFF:
      return "byte-order mark / zero-width no-break space";
    default:
      return "invisible formatting character";
  }
}

std::string_view control_name(char32_t c) {
  switch (c) {
    case 0x00:
      return "NUL";
    case 0x09:
      return "tab";
    case 0x0A:
      return "line feed";
    case 0x0D:
      return "carriage return";
    default:
      return "control character";
  }
}

/// Appends the canonical decomposition of `c` (recursively: a base may decompose again).
void decompose(char32_t c, std::vector<char32_t>& out) {
  const auto* end = std::end(kDecompositions);
  const auto* it = std::lower_bound(std::begin(kDecompositions), end, c,
                                    [](const Decomposition& d, char32_t v) { return d.composed < v; });
  if (it == end || it->composed != c) {
    out.push_back(c);
    return;
  }
  decompose(it->base, out);
  out.push_back(it->mark);
}

int combining_class(char32_t c) {
  return c >= 0x300 && c < 0x370 ? kCombiningClass[c - 0x300] : 0;
}

}  // namespace

NameProblem name_problem(std::string_view name, std::string_view what) {
  const std::vector<char32_t> cps = decode(name);
  for (std::size_t i = 0; i < cps.size(); ++i) {
    if (is_control(cps[i]))
      return {fmt::format("the {} name holds a control character, U+{:04X} ({}), at character {}", what,
                          static_cast<std::uint32_t>(cps[i]), control_name(cps[i]), i + 1),
              "write the name as plain visible text on one line (no escapes such as \\0 or \\t)"};
    if (is_invisible(cps[i]))
      return {
          fmt::format("the {} name holds an invisible character, U+{:04X} ({}), at character {}", what,
                      static_cast<std::uint32_t>(cps[i]), invisible_name(cps[i]), i + 1),
          "retype the name: a name with a character that cannot be seen cannot be told from one without it"};
  }
  if (name_key(name).empty())
    return {fmt::format("the {} name is empty", what),
            fmt::format("give the {} a name of visible characters", what)};
  return {};
}

std::string name_key(std::string_view name) {
  std::vector<char32_t> out;
  for (char32_t c : decode(name)) {
    if (is_invisible(c)) continue;
    if (is_other_space(c) || c == '\t' || c == '\n' || c == '\r') c = ' ';
    decompose(c, out);
  }
  // Canonical order: within each run of combining marks, sort by combining class (stable).
  for (std::size_t i = 0; i < out.size();) {
    if (combining_class(out[i]) == 0) {
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j < out.size() && combining_class(out[j]) != 0) ++j;
    std::stable_sort(out.begin() + static_cast<std::ptrdiff_t>(i),
                     out.begin() + static_cast<std::ptrdiff_t>(j),
                     [](char32_t a, char32_t b) { return combining_class(a) < combining_class(b); });
    i = j;
  }
  const auto first = std::find_if(out.begin(), out.end(), [](char32_t c) { return c != ' '; });
  const auto last = std::find_if(out.rbegin(), out.rend(), [](char32_t c) { return c != ' '; }).base();
  return first < last ? encode(std::vector<char32_t>(first, last)) : std::string();
}

}  // namespace swaybound::spec_detail
