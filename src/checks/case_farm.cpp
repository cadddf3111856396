#include "swaybound/checks/case_farm.hpp"

#include <fmt/format.h>

namespace swaybound {

namespace {
CaseFarm* g_farm = nullptr;  // set once at start-up (the MPI build's main), read by stream_cases
}  // namespace

void set_case_farm(CaseFarm* farm) { g_farm = farm; }

CaseFarm* case_farm() { return g_farm; }

std::string describe_execution(int jobs) {
  if (g_farm) return g_farm->describe(jobs);
  const int threads = jobs > 0 ? jobs : default_jobs();
  return fmt::format("1 process x {} thread{}", threads, threads == 1 ? "" : "s");
}

}  // namespace swaybound
