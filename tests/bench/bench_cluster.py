#!/usr/bin/env python3
"""Benchmark of the MPI path (not a test): `cmake --build --preset bench --target bench_cluster`.

  bench_cluster.py PLAIN MPI SOURCE_DIR [REPEATS]

On this machine, the demo check (specs/gantry_hook_block.yaml) as one process with 2 threads and as
`mpirun -n 2` with 1 thread per rank, run alternately REPEATS times (default 5): medians of the wall
time and of the cases stage, and their ratio (the overhead of the MPI path). From the MPI runs'
summary line: bytes and microseconds per case that rank 0 spends receiving other ranks' cases, and
per case handing them to the checks. Start-up: `--version` through mpirun against the plain binary.

Then a scaling MODEL (not a measurement) built only from those measured figures, for 1e4..1e6 cases
on 1..256 nodes: see model() below for its terms and assumptions.
"""
import math
import os
import pathlib
import re
import statistics
import subprocess
import sys
import tempfile
import time

PLAIN, MPI, SOURCE = sys.argv[1], sys.argv[2], pathlib.Path(sys.argv[3])
REPEATS = int(sys.argv[4]) if len(sys.argv) > 4 else 5
SPEC = SOURCE / "specs" / "gantry_hook_block.yaml"
ENV = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
           OMPI_MCA_btl_vader_single_copy_mechanism="none")
STAGES = re.compile(r"\(cases ([0-9.]+) s, modes and chaos ([0-9.]+) s, search ([0-9.]+) s, accuracy audit ([0-9.]+) s\)")
CLUSTER = re.compile(r"([0-9.]+) kB and ([0-9.]+) us \(receive and decode\) per case; rank 0 handed every case to "
                     r"the checks in ([0-9.]+) us per case")


def timed(command):
    start = time.perf_counter()
    done = subprocess.run(command, env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - start
    if done.returncode not in (0, 1):
        sys.exit(f"{' '.join(map(str, command))} failed ({done.returncode}):\n{done.stderr}")
    return wall, done.stderr


def median(values):
    return statistics.median(values)


work = pathlib.Path(tempfile.mkdtemp(prefix="swaybound-bench-cluster-"))
plain_cmd = [PLAIN, "check", SPEC, "--out", work / "plain", "--quiet", "--force", "--jobs", "2"]
mpi_cmd = ["mpirun", "-n", "2", "--bind-to", "none", MPI, "check", SPEC, "--out", work / "mpi", "--quiet", "--force", "--jobs", "1"]

startup_plain = median([timed([PLAIN, "--version"])[0] for _ in range(REPEATS)])
startup_mpi = median([timed(["mpirun", "-n", "2", MPI, "--version"])[0] for _ in range(REPEATS)])

runs = {"plain": [], "mpi": []}
for _ in range(REPEATS):
    for name, command in (("plain", plain_cmd), ("mpi", mpi_cmd)):
        wall, err = timed(command)
        stages = [float(x) for x in STAGES.search(err).groups()]
        cluster = CLUSTER.search(err)
        runs[name].append((wall, stages, [float(x) for x in cluster.groups()] if cluster else None))
if (work / "plain" / "results.json").read_bytes() != (work / "mpi" / "results.json").read_bytes():
    sys.exit("results.json differs between the plain and the MPI run")

wall = {k: median([r[0] for r in v]) for k, v in runs.items()}
cases_stage = {k: median([r[1][0] for r in v]) for k, v in runs.items()}
rest = {k: median([sum(r[1][1:]) for r in v]) for k, v in runs.items()}
kb_case = median([r[2][0] for r in runs["mpi"]])
us_gather = median([r[2][1] for r in runs["mpi"]])
us_consume = median([r[2][2] for r in runs["mpi"]])

steps = []
with open(work / "plain" / "cases.csv") as f:
    header = f.readline().strip().split(",")
    col = header.index('"steps"')
    for line in f:
        steps.append(float(line.split(",")[col]))
n_demo = len(steps)

print(f"# MPI path, demo check ({n_demo} cases), {REPEATS} alternating runs each, medians")
print(f"one process x 2 threads : wall {wall['plain']:.2f} s, cases stage {cases_stage['plain']:.2f} s, "
      f"other stages {rest['plain']:.2f} s")
print(f"mpirun -n 2 x 1 thread  : wall {wall['mpi']:.2f} s, cases stage {cases_stage['mpi']:.2f} s, "
      f"other stages {rest['mpi']:.2f} s (rank 0, with the cores of the ranks on its node)")
print(f"ratio MPI / plain       : wall {wall['mpi'] / wall['plain']:.3f}, cases stage "
      f"{cases_stage['mpi'] / cases_stage['plain']:.3f}")
print(f"gather per case         : {kb_case:.2f} kB, {us_gather:.1f} us receive + decode on rank 0; "
      f"{us_consume:.1f} us per case into the checks and outputs")
print(f"start-up                : mpirun -n 2 --version {startup_mpi * 1e3:.0f} ms, plain --version "
      f"{startup_plain * 1e3:.0f} ms")


def model(cases, nodes, cores):
    """Predicted wall time [s] of a check of `cases` cases on `nodes` nodes of `cores` cores.

    Terms, each from a figure measured above:
      compute   cases x mean case cost / (nodes x cores); the mean case cost is the plain run's
                cases stage x 2 threads / its case count, i.e. this machine's core speed;
      tail      the most expensive case (its share of steps x the mean cost): the last block ends
                after it at worst;
      rank 0    every case passes through rank 0 (receive, decode, checks): cases x (gather +
                consume) per case is a floor the run cannot go below, whatever the node count;
      stages    modes, chaos, search, audit and recordings run on rank 0 only: the plain run's
                other stages, independent of the case count for a given spec;
      start-up  the measured mpirun start-up, assumed to grow as 1 + log2(nodes) (a tree launch;
                an assumption, not measured: one node here).
    Not modelled: network latency and bandwidth between nodes (the gather here is shared memory),
    a batch scheduler's queueing, cases that differ from the demo's cost mix.
    """
    mean = cases_stage["plain"] * 2 / n_demo
    worst = mean * max(steps) / statistics.mean(steps)
    compute = cases * mean / (nodes * cores)
    floor = cases * (us_gather + us_consume) * 1e-6
    return startup_mpi * (1 + math.log2(nodes)) + max(compute, floor) + worst + rest["plain"]


cores = 32
print(f"\n# Scaling MODEL (not a measurement): nodes of {cores} cores at this machine's speed per core")
print("cases     " + "".join(f"{n:>10} node{'s' if n > 1 else ' '}" for n in (1, 4, 16, 64, 256)))
for cases in (10**4, 10**5, 10**6):
    print(f"{cases:<10}" + "".join(f"{model(cases, n, cores):>14.1f} s" for n in (1, 4, 16, 64, 256)))
floor_rate = 1e6 / (us_gather + us_consume)
print(f"rank 0 takes at most {floor_rate:,.0f} cases/s (gather + checks): beyond "
      f"{math.ceil(floor_rate * cases_stage['plain'] * 2 / n_demo / cores)} nodes of {cores} cores the demo's "
      f"cases arrive faster than rank 0 can take them")
