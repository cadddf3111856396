#include "swaybound/core/hash.hpp"

#include <fstream>
#include <sstream>

#include <fmt/format.h>
#include <openssl/evp.h>

#include "swaybound/core/error.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

std::string sha256_hex(std::string_view data) {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  if (EVP_Digest(data.data(), data.size(), digest, &length, EVP_sha256(), nullptr) != 1)
    throw RunError("SHA-256 computation failed");
  std::string hex;
  for (unsigned int i = 0; i < length; ++i) hex += fmt::format("{:02x}", digest[i]);
  return hex;
}

std::string sha256_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw RunError(fmt::format("cannot read {} to hash it", path));
  std::ostringstream buffer;
  buffer << in.rdbuf();
  return sha256_hex(buffer.str());
}

std::string spec_sha256(const Spec& spec) {
  return sha256_hex(spec.source_text.empty() ? normalised_yaml(spec) : std::string_view(spec.source_text));
}

}  // namespace swaybound
