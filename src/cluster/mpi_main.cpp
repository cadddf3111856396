// swaybound built with Open MPI: `mpirun -n K swaybound check SPEC --out DIR` (or `size`). Rank 0
// runs the command exactly as the plain build does and writes the one packet; the cases of every
// check (and of every sizing evaluation) are spread over all ranks (mpi_farm.hpp). Run as a single
// process it is the plain build.
#include <mpi.h>

#include <csignal>
#include <cstdio>
#include <iostream>

#include <fmt/format.h>

#include "../cli/commands.hpp"
#include "mpi_farm.hpp"

int main(int argc, char** argv) {
  using namespace swaybound;
  int provided = 0;
  MPI_Init_thread(&argc, &argv, MPI_THREAD_FUNNELED, &provided);
  int rank = 0, ranks = 1;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  MPI_Comm_size(MPI_COMM_WORLD, &ranks);
  if (provided < MPI_THREAD_FUNNELED) {
    if (rank == 0)
      std::fprintf(stderr, "swaybound: error: this MPI library cannot run threads beside MPI "
                           "(MPI_THREAD_FUNNELED); nothing was written\n");
    MPI_Finalize();
    return cli::kExitError;
  }
  if (rank != 0) {
    // mpirun passes SIGINT and SIGTERM to every rank: rank 0 alone acts on them (it removes its
    // temporary packet, then ends the job), so a worker ignores them rather than dying first and
    // having mpirun kill rank 0 before it has cleaned up.
    std::signal(SIGINT, SIG_IGN);
    std::signal(SIGTERM, SIG_IGN);
    const int status = cluster::serve_cases();
    MPI_Finalize();
    return status;
  }
  int status = cli::kExitError;
  {
    cluster::MpiFarm farm(ranks);
    if (ranks > 1) set_case_farm(&farm);
    status = cli::run(argc, argv);
    set_case_farm(nullptr);
    if (farm.broken()) {
      // Other ranks are still computing blocks nobody will receive (or are gone): end them all.
      // The packet writer has already removed its temporary folder; the previous packet is intact.
      std::cerr << "swaybound: the ranks of the job are out of step after the failure above; ending the job\n"
                << std::flush;
      MPI_Abort(MPI_COMM_WORLD, status == 0 ? cli::kExitError : status);
    }
    farm.stop_workers();
    const cluster::FarmStats& s = farm.stats();
    if (ranks > 1 && s.cases > 0) {
      std::string by_rank;
      for (std::size_t r = 0; r < s.cases_by_rank.size(); ++r)
        by_rank += fmt::format("{}{}", r ? ", " : "", s.cases_by_rank[r]);
      std::cerr << fmt::format(
          "cluster: {} ranks ran {} cases in {} blocks (per rank: {}); {:.1f} kB gathered from the other ranks, "
          "{:.2f} kB and {:.1f} us (receive and decode) per case; rank 0 handed every case to the checks in "
          "{:.1f} us per case\n",
          ranks, s.cases, s.blocks, by_rank, s.bytes / 1e3,
          s.remote_cases > 0 ? s.bytes / 1e3 / static_cast<double>(s.remote_cases) : 0.0,
          s.remote_cases > 0 ? s.gather_seconds * 1e6 / static_cast<double>(s.remote_cases) : 0.0,
          s.consume_seconds * 1e6 / static_cast<double>(s.cases));
    }
  }
  MPI_Finalize();
  return status;
}
