#!/usr/bin/python3
"""Self-check of sympy_rope_chain.py (the elastic-link chain reference).

Run: /usr/bin/python3 tests/reference/check_sympy_rope_chain.py   (exit status 0 on success)

Checks, each against a figure obtained independently of the script's own derivation:
  1. Work-energy identity dE/dt = P_base + P_damp + P_rope (1e-10 relative) at 50 random taut
     states for n = 2 (elastic top, rigid lower) and n = 3 (elastic top and middle, rigid bottom),
     with base acceleration and velocity, pivot dampers and axial damping all acting; each power
     term is asserted to be significant so that no term can be dropped unnoticed.
  2. Hanging chain at rest, EA huge, each elastic link at its static stretch: r'' ~ 0, theta'' = 0,
     the tension equals the static value g (phi_i m_i + sum_{j>i} m_j) (from dV_g/dr_i = -T_i) and
     the reactions equal the weight below each pivot.
  3. One elastic link with a point-like mass (I0 = 0, phi = 1) at rest, hanging vertically:
     r'' = g + ay - T/m with T = k delta + c (0 - ell_dot) (Newton along the vertical).
  4. An all-rigid chain, and elastic links held at fixed length (r' = 0, ell_dot chosen so that r'' = 0: the elastic
     balance)
     give the same theta'' and reactions as sympy_chain.py's rigid chain of the same geometry
     (L = r, c = phi r, I = I0 (r/L_ref)^2), to 1e-12.
  5. The stdin/stdout JSON interface and its exit status 2 on malformed input.
"""
import json
import os
import subprocess
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import sympy_chain  # noqa: E402  (rigid-link reference, for check 4)
import sympy_rope_chain as rope  # noqa: E402

FAILURES = []
MODELS = {}


def check(condition, message):
    if not condition:
        FAILURES.append(message)
        print("FAIL: " + message)


def model_for(links):
    pattern = tuple(l["elastic"] is not None for l in links)
    if pattern not in MODELS:
        MODELS[pattern] = rope.derive(pattern)
    return MODELS[pattern]


def run(data):
    return rope.evaluate(data, model_for(data["links"]))


def rigid_link(rng, C=True):
    L = rng.uniform(0.3, 2.0)
    return {"m": rng.uniform(0.5, 20.0), "L": L, "c": rng.uniform(0.1, 0.9) * L,
            "I": rng.uniform(0.01, 2.0), "C": rng.uniform(0.1, 5.0) if C else 0.0, "elastic": None}


def elastic_link(rng):
    L = rng.uniform(0.5, 3.0)
    return {"m": rng.uniform(0.5, 20.0), "L": L, "C": rng.uniform(0.1, 5.0),
            "elastic": {"phi": rng.uniform(0.2, 0.8), "I0": rng.uniform(0.01, 2.0),
                        "parts": float(rng.integers(1, 5)), "EA": rng.uniform(1e4, 1e6),
                        "c_axial": rng.uniform(1.0, 100.0), "ell": L * rng.uniform(0.8, 1.2),
                        "ell_dot": rng.uniform(-0.5, 0.5)}}


def check_energy_identity(rng):
    """Check 1."""
    for pattern in ((True, False), (True, True, False)):
        n = len(pattern)
        worst = 0.0
        significant = {"power_base": 0, "power_damp": 0, "power_rope": 0}
        for _ in range(50):
            links = [elastic_link(rng) if e else rigid_link(rng) for e in pattern]
            thetas = list(rng.uniform(-1.2, 1.2, n))
            omegas = list(rng.uniform(-2.0, 2.0, n))
            rs, rds = [], []
            for l in links:
                if l["elastic"] is None:
                    continue
                e = l["elastic"]
                k = e["parts"] * e["EA"] / e["ell"]
                rs.append(e["ell"] * (1.0 + rng.uniform(1e-4, 1e-2)))
                # r' such that the taut law stays positive: k delta + c (r' - ell_dot) > 0.
                floor = e["ell_dot"] - 0.9 * k * (rs[-1] - e["ell"]) / e["c_axial"]
                rds.append(max(floor, e["ell_dot"] + rng.uniform(-0.3, 0.3)))
            data = {"g": 9.81, "ax": rng.uniform(-3, 3), "ay": rng.uniform(-3, 3),
                    "vxb": rng.uniform(-2, 2), "vyb": rng.uniform(-2, 2), "links": links,
                    "states": [thetas + rs + omegas + rds]}
            out = run(data)
            check(all(T > 0 for T in out["tension"][0]), "state not taut: %r" % out["tension"][0])
            terms = [out[key][0] for key in ("power_base", "power_damp", "power_rope")]
            lhs = out["energy_rate"][0]
            scale = abs(lhs) + sum(abs(x) for x in terms)
            err = abs(lhs - sum(terms)) / scale
            worst = max(worst, err)
            for key, x in zip(("power_base", "power_damp", "power_rope"), terms):
                if abs(x) > 1e-3 * scale:
                    significant[key] += 1
        check(worst < 1e-10,
              "energy identity, pattern %r: worst relative error %.3g" % (pattern, worst))
        for key, count in significant.items():
            check(count >= 25, "energy identity, pattern %r: %s significant in only %d of 50 states"
                  % (pattern, key, count))
        print("check 1 (energy identity) pattern %r: worst relative error %.3g over 50 states"
              % (pattern, worst))


def check_static_stretch():
    """Check 2."""
    g = 9.81
    for EA in (1e7, 1e12):
        links = [
            {"m": 4.0, "L": 2.0, "C": 0.5,
             "elastic": {"phi": 0.5, "I0": 0.3, "parts": 2.0, "EA": EA, "c_axial": 80.0,
                         "ell": 2.0, "ell_dot": 0.0}},
            {"m": 1.5, "L": 1.0, "C": 0.2,
             "elastic": {"phi": 0.3, "I0": 0.1, "parts": 1.0, "EA": EA, "c_axial": 20.0,
                         "ell": 1.0, "ell_dot": 0.0}},
            {"m": 7.0, "L": 0.6, "c": 0.25, "I": 0.2, "C": 0.3, "elastic": None}]
        masses = [l["m"] for l in links]
        static, rs = [], []
        for i in (0, 1):
            e = links[i]["elastic"]
            T = g * (e["phi"] * masses[i] + sum(masses[i + 1:]))
            static.append(T)
            rs.append(e["ell"] * (1.0 + T / (e["parts"] * EA)))  # k (r - ell) = T
        data = {"g": g, "ax": 0.0, "ay": 0.0, "vxb": 0.0, "vyb": 0.0, "links": links,
                "states": [[0.0, 0.0, 0.0] + rs + [0.0] * 5]}
        out = run(data)
        qdd = out["qdd"][0]
        # r carries a rounding error of one ulp, which the stiffness turns into a force error.
        k_max = max(l["elastic"]["parts"] * EA / l["elastic"]["ell"] for l in links[:2])
        force_tol = 8 * np.finfo(float).eps * k_max * max(rs) + 1e-12 * max(static)
        acc_tol = force_tol / min(masses) + 1e-12 * g
        check(all(abs(a) <= 1e-14 for a in qdd[:3]), "static: theta'' %r" % qdd[:3])
        check(all(abs(a) <= acc_tol for a in qdd[3:]),
              "static EA=%g: r'' %r (tolerance %.3g)" % (EA, qdd[3:], acc_tol))
        for T, T0 in zip(out["tension"][0], static):
            check(abs(T - T0) <= force_tol, "static EA=%g: tension %r, expected %r" % (EA, T, T0))
        reaction = out["reaction"][0]
        for k in range(3):
            weight = g * sum(masses[k:])
            check(abs(reaction[2 * k]) <= acc_tol * sum(masses)
                  and abs(reaction[2 * k + 1] - weight) <= acc_tol * sum(masses) + 1e-12 * weight,
                  "static EA=%g: reaction %d is %r, expected (0, %r)"
                  % (EA, k, reaction[2 * k:2 * k + 2], weight))
        print("check 2 (static stretch) EA=%g: r'' = %s (tolerance %.2g), tension error %.2g N"
              % (EA, ["%.2g" % a for a in qdd[3:]], acc_tol,
                 max(abs(T - T0) for T, T0 in zip(out["tension"][0], static))))


def check_point_mass():
    """Check 3."""
    g = 9.81
    worst = 0.0
    for m, parts, EA, c_ax, ell, ell_dot, delta, ay in (
            (10.0, 1.0, 1e5, 0.0, 2.0, 0.0, 1e-3, 0.0),
            (3.0, 4.0, 3e6, 150.0, 5.5, 0.7, 2e-4, 0.0),
            (250.0, 2.0, 8e7, 900.0, 12.0, -0.3, 5e-5, -1.7)):
        links = [{"m": m, "L": 1.0, "C": 0.4,
                  "elastic": {"phi": 1.0, "I0": 0.0, "parts": parts, "EA": EA, "c_axial": c_ax,
                              "ell": ell, "ell_dot": ell_dot}}]
        r = ell + delta
        data = {"g": g, "ax": 0.0, "ay": ay, "vxb": 0.4, "vyb": -0.2, "links": links,
                "states": [[0.0, r, 0.0, 0.0]]}
        out = run(data)
        T = parts * EA / ell * (r - ell) + c_ax * (0.0 - ell_dot)
        expected = g + ay - T / m
        got = out["qdd"][0][1]
        err = abs(got - expected) / max(abs(expected), g)
        worst = max(worst, err)
        check(err <= 1e-12, "point mass: r'' = %r, expected %r" % (got, expected))
        check(out["qdd"][0][0] == 0.0, "point mass: theta'' = %r" % out["qdd"][0][0])
        check(abs(out["tension"][0][0] - T) <= 1e-12 * abs(T), "point mass: tension %r vs %r"
              % (out["tension"][0][0], T))
    print("check 3 (point mass at rest): worst relative error %.3g" % worst)


def check_against_rigid(rng):
    """Check 4."""
    rigid_cache = {}
    worst = 0.0
    for pattern in ((True,), (True, False), (False, True), (True, True, False), (False, True, True),
                    (False, False, False)):
        n = len(pattern)
        if n not in rigid_cache:
            rigid_cache[n] = sympy_chain.derive(n)
        alpha_fn, reaction_fn = rigid_cache[n]
        compared = 0
        while compared < 5:
            links = [elastic_link(rng) if e else rigid_link(rng) for e in pattern]
            elastic = [k for k in range(n) if pattern[k]]
            thetas = list(rng.uniform(-1.0, 1.0, n))
            omegas = list(rng.uniform(-2.0, 2.0, n))
            rs = [links[k]["L"] * rng.uniform(0.9, 1.1) for k in elastic]
            for k, r in zip(elastic, rs):
                links[k]["elastic"]["ell"] = r  # no stretch: the damping term carries the tension
            g, ax, ay = 9.81, rng.uniform(-3, 3), rng.uniform(-3, 3)

            def rdd(ell_dots):
                for k, ell_dot in zip(elastic, ell_dots):
                    links[k]["elastic"]["ell_dot"] = float(ell_dot)
                data = {"g": g, "ax": ax, "ay": ay, "vxb": 0.5, "vyb": -0.3, "links": links,
                        "states": [thetas + rs + omegas + [0.0] * len(elastic)]}
                out = run(data)
                return np.array(out["qdd"][0][n:]), out

            # With r' = 0 and ell = r the tension is -c_axial ell_dot (no cancellation), and r''
            # is affine in the tensions: Newton steps on ell_dot find the balance.
            ell_dots = np.zeros(len(elastic))
            for _step in range(2 if elastic else 0):
                f0, _ = rdd(ell_dots)
                J = np.empty((len(elastic), len(elastic)))
                for j in range(len(elastic)):
                    step = np.zeros(len(elastic))
                    step[j] = 1e-2
                    J[:, j] = (rdd(ell_dots + step)[0] - f0) / step[j]
                ell_dots = ell_dots - np.linalg.solve(J, f0)
            residual, out = rdd(ell_dots)
            if min(out["tension"][0], default=1.0) <= 0.0:
                continue  # the balance needs a slack rope: not a state the caller would send
            compared += 1
            got_alpha = out["qdd"][0][:n]
            got_reaction = out["reaction"][0]

            rigid_params = [g, ax, ay]
            geometry = []
            for k in range(n):
                l = links[k]
                if l["elastic"] is None:
                    geometry.append((l["L"], l["c"], l["I"]))
                else:
                    r = rs[elastic.index(k)]
                    e = l["elastic"]
                    geometry.append((r, e["phi"] * r, e["I0"] * (r / l["L"]) ** 2))
            rigid_params += [l["m"] for l in links]
            rigid_params += [geo[0] for geo in geometry] + [geo[1] for geo in geometry]
            rigid_params += [geo[2] for geo in geometry] + [l["C"] for l in links]
            rigid_params += [0.0] * n + [1.0] * n  # no Coulomb friction (T = 0, wt = 1)
            alpha = [float(v) for v in alpha_fn(thetas, omegas, rigid_params)]
            reaction = [float(v) for v in reaction_fn(thetas, omegas, alpha, rigid_params)]

            a_scale = max(1.0, max(abs(a) for a in alpha))
            f_scale = max(abs(f) for f in reaction)
            a_err = max(abs(a - b) for a, b in zip(got_alpha, alpha)) / a_scale
            f_err = max(abs(a - b) for a, b in zip(got_reaction, reaction)) / f_scale
            worst = max(worst, a_err, f_err)
            check(max(abs(residual), default=0.0) <= 1e-9, "rigid comparison %r: r'' at balance %r"
                  % (pattern, residual))
            check(a_err <= 1e-12, "rigid comparison %r: theta'' %r vs rigid %r"
                  % (pattern, got_alpha, alpha))
            check(f_err <= 1e-12, "rigid comparison %r: reactions %r vs rigid %r"
                  % (pattern, got_reaction, reaction))
    print("check 4 (fixed length vs sympy_chain.py rigid): worst relative error %.3g" % worst)


def check_interface():
    """Check 5."""
    script = os.path.join(HERE, "sympy_rope_chain.py")
    data = {"g": 9.81, "ax": 0.0, "ay": 0.0, "vxb": 0.0, "vyb": 0.0,
            "links": [{"m": 10.0, "L": 1.0, "C": 0.0,
                       "elastic": {"phi": 1.0, "I0": 0.0, "parts": 1, "EA": 1e5, "c_axial": 0.0,
                                   "ell": 2.0, "ell_dot": 0.0}},
                      {"m": 1.0, "L": 0.5, "c": 0.25, "I": 0.02, "elastic": None}],
            "states": [[0.0, 0.0, 2.001, 0.0, 0.0, 0.0], [0.1, -0.1, 2.002, 0.3, 0.2, 0.01]]}
    proc = subprocess.run([sys.executable, script], input=json.dumps(data), capture_output=True,
                          text=True, check=False)
    check(proc.returncode == 0,
          "interface: exit status %d, stderr %s" % (proc.returncode, proc.stderr))
    if proc.returncode == 0:
        out = json.loads(proc.stdout)
        shapes = {"qdd": 3, "tension": 1, "reaction": 4}
        for key in ("qdd", "tension", "reaction", "energy", "energy_rate", "power_base",
                    "power_damp", "power_rope"):
            check(key in out and len(out[key]) == 2,
                  "interface: output %s missing or wrong length" % key)
            if key in shapes and key in out:
                check(all(len(row) == shapes[key] for row in out[key]),
                      "interface: rows of %s must hold %d numbers" % (key, shapes[key]))
        # First state: k delta = (1 * 1e5 / 2) * 1e-3 = 50 N.
        check(abs(out["tension"][0][0] - 50.0) <= 1e-9, "interface: tension %r" % out["tension"][0])
    bad = dict(data, states=[[0.0, 0.0, 2.0]])
    proc = subprocess.run([sys.executable, script], input=json.dumps(bad), capture_output=True,
                          text=True, check=False)
    check(proc.returncode == 2 and "states[0]" in proc.stderr and proc.stdout == "",
          "interface: short state gives status %d, stderr %r" % (proc.returncode, proc.stderr))
    print("check 5 (JSON interface): done")


def main():
    start = time.time()
    rng = np.random.default_rng(20240611)
    check_energy_identity(rng)
    check_static_stretch()
    check_point_mass()
    check_against_rigid(rng)
    check_interface()
    print("%d failure(s), %.1f s" % (len(FAILURES), time.time() - start))
    sys.exit(1 if FAILURES else 0)


if __name__ == "__main__":
    main()
