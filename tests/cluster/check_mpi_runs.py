#!/usr/bin/env python3
"""The MPI build against the plain one (ctest, when the build has MPI).

  check_mpi_runs.py PLAIN MPI SOURCE_DIR WORK_DIR

1. `check` and `size` of tests/cluster/cluster_check.yaml: one process (2 threads) against
   `mpirun -n 2` (1 thread per rank), `mpirun -n 3` (oversubscribed) and the MPI build run without
   mpirun: results.json, cases.csv (and for size sized_spec.yaml, sizing.json) byte for byte; the
   MANIFEST records how the cases ran.
2. Exit statuses through mpirun: 1 for a failing check, 2 for a bad spec (nothing written).
3. A rank killed in the middle of a check (SIGKILL), and SIGTERM to mpirun: the job ends with a
   non-zero status and the previous packet in the folder is untouched.
"""
import hashlib
import os
import pathlib
import shutil
import signal
import subprocess
import sys
import time

PLAIN, MPI, SOURCE, WORK = sys.argv[1], sys.argv[2], pathlib.Path(sys.argv[3]), pathlib.Path(sys.argv[4])
SPEC = SOURCE / "tests" / "cluster" / "cluster_check.yaml"
LONG_SPEC = SOURCE / "specs" / "gantry_hook_block.yaml"
ENV = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
           OMPI_MCA_btl_vader_single_copy_mechanism="none", OMPI_MCA_rmaps_base_oversubscribe="1")
failures = []


def mpirun(ranks, *args):
    return ["mpirun", "-n", str(ranks), "--oversubscribe", "--bind-to", "none", MPI, *args]


def run(command, expect):
    done = subprocess.run(command, env=ENV, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, timeout=600)
    if done.returncode != expect:
        failures.append(f"{' '.join(map(str, command))}: exit {done.returncode}, expected {expect}\n{done.stderr}")
    return done


def same_files(a, b, names, what):
    for name in names:
        x, y = (a / name).read_bytes(), (b / name).read_bytes()
        if x != y:
            failures.append(f"{what}: {name} differs between {a.name} and {b.name}")
        else:
            print(f"ok: {what}: {name} identical ({len(x)} bytes) in {a.name} and {b.name}")


def execution(folder):
    for line in (folder / "MANIFEST").read_text().splitlines():
        if line.startswith("execution: "):
            return line[len("execution: "):]
    return None


def tree_digest(folder):
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(folder.iterdir()) if p.is_file()}


if WORK.exists():
    shutil.rmtree(WORK)
WORK.mkdir(parents=True)

# 1. check and size, one process against the ranks.
for command, names, status in (("check", ["results.json", "cases.csv"], 0),
                               ("size", ["results.json", "cases.csv", "sized_spec.yaml", "sizing.json"], 0)):
    base = WORK / f"{command}-plain"
    run([PLAIN, command, SPEC, "--out", base, "--quiet", "--jobs", "2"], status)
    runs = {f"{command}-mpi2": mpirun(2, command, SPEC, "--out", WORK / f"{command}-mpi2", "--quiet", "--jobs", "1"),
            f"{command}-mpi3": mpirun(3, command, SPEC, "--out", WORK / f"{command}-mpi3", "--quiet", "--jobs", "1"),
            f"{command}-single": [MPI, command, SPEC, "--out", WORK / f"{command}-single", "--quiet", "--jobs", "2"]}
    for name, line in runs.items():
        done = run(line, status)
        if (WORK / name).is_dir():
            same_files(base, WORK / name, names, command)
            if "mpi" in name and "cluster:" not in done.stderr:
                failures.append(f"{name}: no cluster summary line on stderr")
    expected = {f"{command}-plain": "1 process x 2 threads", f"{command}-mpi2": "2 MPI ranks x 1 thread each",
                f"{command}-mpi3": "3 MPI ranks x 1 thread each", f"{command}-single": "1 process x 2 threads"}
    for name, text in expected.items():
        if (WORK / name).is_dir() and execution(WORK / name) != text:
            failures.append(f"{name}: MANIFEST execution is {execution(WORK / name)!r}, expected {text!r}")

# 2. Exit statuses: a failing check (a tighter limit) and a bad spec.
tight = WORK / "tight.yaml"
tight.write_text(SPEC.read_text().replace("{peak_angle: 10 deg, link: rope}", "{peak_angle: 5 deg, link: rope}"))
run(mpirun(2, "check", tight, "--out", WORK / "tight", "--quiet", "--jobs", "1", "--no-search"), 1)
bad = WORK / "bad.yaml"
bad.write_text(SPEC.read_text().replace("length: 5 m", "length: -5 m"))
done = run(mpirun(2, "check", bad, "--out", WORK / "bad", "--quiet"), 2)
if "bad.yaml:" not in done.stderr or (WORK / "bad").exists():
    failures.append(f"bad spec through mpirun: expected a diagnostic naming the file and no output\n{done.stderr}")

# 3. A rank killed mid-run: the previous packet stays as it was.
previous = WORK / "check-plain"
before = tree_digest(previous)
job = subprocess.Popen(mpirun(2, "check", LONG_SPEC, "--out", previous, "--quiet", "--jobs", "1", "--force"),
                       env=ENV, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
victim = None
deadline = time.time() + 60
while victim is None and time.time() < deadline and job.poll() is None:
    time.sleep(0.5)
    for proc in pathlib.Path("/proc").iterdir():
        try:
            if proc.name.isdigit() and b"OMPI_COMM_WORLD_RANK=1\0" in (proc / "environ").read_bytes() \
                    and (proc / "exe").resolve() == pathlib.Path(MPI).resolve():
                victim = int(proc.name)
        except OSError:
            pass
if victim is None:
    failures.append("rank 1 of the job to kill was not found")
    job.kill()
else:
    time.sleep(1.0)  # let it take blocks
    os.kill(victim, signal.SIGKILL)
    try:
        job.wait(timeout=120)
    except subprocess.TimeoutExpired:
        job.kill()
        failures.append("the job did not end after one of its ranks was killed")
    if job.returncode == 0:
        failures.append("the job whose rank was killed exited with status 0")
    if tree_digest(previous) != before:
        failures.append("the previous packet changed although the job that would replace it was killed")
    else:
        print(f"ok: killed rank {victim}; the job exited with {job.returncode}; the previous packet is intact")

# 4. SIGTERM to mpirun (what a batch scheduler sends at the end of a job's time): the same.
before = tree_digest(previous)
job = subprocess.Popen(mpirun(2, "check", LONG_SPEC, "--out", previous, "--quiet", "--jobs", "1", "--force"),
                       env=ENV, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
time.sleep(4.0)
job.send_signal(signal.SIGTERM)
try:
    job.wait(timeout=120)
except subprocess.TimeoutExpired:
    job.kill()
    failures.append("the job did not end after SIGTERM")
partial = [p.name for p in WORK.iterdir() if p.name.startswith(".") and "partial" in p.name]
if job.returncode == 0:
    failures.append("the job ended by SIGTERM exited with status 0")
elif tree_digest(previous) != before or partial:
    failures.append(f"after SIGTERM: previous packet changed or a partial packet is left: {partial}")
else:
    print(f"ok: SIGTERM to mpirun: exit {job.returncode}; the previous packet is intact, no partial packet left")

for f in failures:
    print("FAIL:", f)
sys.exit(1 if failures else 0)
