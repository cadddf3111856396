#pragma once
// What rank 0's farm (mpi_farm.cpp) and the other ranks (mpi_worker.cpp) share: the message tags
// and their byte layout (mpi_farm.hpp describes the protocol), and running a block of cases.
#include <mpi.h>
#include <sched.h>

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <limits>
#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

#include <fmt/format.h>

#include "swaybound/cases/runner.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/core/error.hpp"

namespace swaybound::cluster {

enum Tag : int { kHello = 1, kWork = 2, kResult = 3, kFailure = 4, kStop = 5 };

/// Bytes in the order they are put; read back in the same order by Unpack.
struct Pack {
  std::string bytes;
  template <class T>
  void put(T v) {
    static_assert(std::is_trivially_copyable_v<T>);
    bytes.append(reinterpret_cast<const char*>(&v), sizeof v);
  }
  void put_text(std::string_view s) {
    put(static_cast<std::uint64_t>(s.size()));
    bytes.append(s);
  }
};

struct Unpack {
  std::string_view in;
  std::size_t at = 0;
  template <class T>
  T get() {
    T v;
    if (in.size() - at < sizeof v) throw RunError("cluster message: shorter than its contents");
    std::memcpy(&v, in.data() + at, sizeof v);
    at += sizeof v;
    return v;
  }
  std::string get_text() {
    const auto n = get<std::uint64_t>();
    if (n > in.size() - at) throw RunError("cluster message: a text runs past its end");
    std::string s(in.substr(at, n));
    at += n;
    return s;
  }
  std::string_view rest() const { return in.substr(at); }
};

inline void send(const std::string& bytes, int rank, int tag) {
  if (bytes.size() > static_cast<std::size_t>(std::numeric_limits<int>::max()))
    throw RunError(fmt::format("cluster message of {} bytes: more than one MPI message holds", bytes.size()));
  MPI_Send(bytes.data(), static_cast<int>(bytes.size()), MPI_BYTE, rank, tag, MPI_COMM_WORLD);
}

/// Receives the message `status` announced (from MPI_Probe or MPI_Iprobe).
inline std::string receive(const MPI_Status& status) {
  int count = 0;
  MPI_Get_count(&status, MPI_BYTE, &count);
  std::string bytes(static_cast<std::size_t>(count), '\0');
  MPI_Recv(bytes.data(), count, MPI_BYTE, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
  return bytes;
}

/// CPUs this process may run on (its affinity mask: what mpirun's binding left it).
inline int allowed_cpus() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) != 0) return default_jobs();
  return std::max(1, CPU_COUNT(&set));
}

inline int world_rank() {
  int rank = 0;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  return rank;
}

/// Runs the listed cases of `plan` on `jobs` threads, in list order (mpi_worker.cpp).
std::vector<CaseMetrics> run_block(const CheckPlan& plan, const std::vector<long>& indices, int jobs);

}  // namespace swaybound::cluster
