#pragma once
// SHA-256 of files and text (OpenSSL's libcrypto), as lowercase hex: ties every output to the
// exact spec it came from.
#include <string>
#include <string_view>

namespace swaybound {

std::string sha256_hex(std::string_view data);
/// Throws RunError when the file cannot be read.
std::string sha256_file(const std::string& path);

struct Spec;
/// The fingerprint of a spec: SHA-256 of the bytes it was loaded from, or of its normalised YAML
/// when it was built or changed in memory (a design during sizing clears source_text).
std::string spec_sha256(const Spec& spec);

}  // namespace swaybound
