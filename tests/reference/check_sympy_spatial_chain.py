#!/usr/bin/python3
"""Self-check of sympy_spatial_chain.py (the spatial chain reference on spherical pivots).

Run: /usr/bin/python3 tests/reference/check_sympy_spatial_chain.py   (exit status 0 on success)

Checks, each against a figure obtained independently of the script's own derivation (the checks
work in Cartesian vectors only and never use the script's chart):
  1. Planar consistency: with every e_i, e_i' in the x-y plane and a_z = 0 (no wind), the
     accelerations and reactions equal those of sympy_chain.py (the planar reference) for the same
     chain, mapped by e = (sin th, -cos th, 0), e' = th' (cos th, sin th, 0),
     e'' = th'' (cos th, sin th, 0) - th'^2 e, F = (Fx, Fy, 0); 1e-10 relative, n = 1, 2, 3, with
     dampers and Coulomb friction (the planar per-angle law equals the isotropic law in a plane).
  2. Conical pendulum: one link, no pivot torque, steady motion on the circle of cone angle alpha
     about the vertical at rate W, e' = W y x e: e'' must be the circle's centripetal acceleration
     -W^2 (e_x, 0, e_z) with W^2 = m g c / ((I + m c^2) cos alpha) (point mass: c = L, I = 0, so
     W^2 = g / (L cos alpha); a rod: I > 0 and c < L, from the no-twist Lagrangian
     T = 1/2 (I + m c^2)(alpha'^2 + sin^2 alpha phi'^2)); 1e-12 relative.
  3. Rotational invariance about the vertical: rotating a state, a_base and the wind force about y
     by a random angle rotates the accelerations and reactions the same way (1e-10), n = 2, 3.
  4. Energy: with a_base = 0, dE/dt computed from the output accelerations in Cartesian form,
        dE/dt = sum_k m_k v_k . a_k + I_k e_k' . e_k'' + m_k g v_ky,
     equals sum_i tau_i . (w_i - w_{i-1}) + F_w . v_w (1e-10 relative), and the output energy
     equals sum_k 1/2 m_k |v_k|^2 + 1/2 I_k |e_k'|^2 + m_k g y_k (1e-12); n = 1, 2, 3; each power
     term is asserted to be significant so that none can be dropped unnoticed.
  5. Euler's law per link (checks the reactions against the accelerations): the moment about the
     link's centre of mass of the pivot forces (F_i at p_i, -F_{i+1} at p_{i+1}), the wind and the
     pivot torques tau_i - tau_{i+1}, projected normal to e_i (twist is not modelled), equals
     d/dt (I_i e_i x e_i') = I_i e_i x e_i'' (1e-10 relative), n = 1, 2, 3.
  6. The stdin/stdout JSON interface, and exit status 2 with no output on malformed input.
"""
import json
import math
import os
import subprocess
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import sympy_chain  # noqa: E402  (planar reference, for check 1)
import sympy_spatial_chain as spatial  # noqa: E402

FAILURES = []
MODELS = {}
G = 9.81


def check(condition, message):
    if not condition:
        FAILURES.append(message)
        print("FAIL: " + message)


def run(data):
    n = len(data["links"])
    if n not in MODELS:
        MODELS[n] = spatial.derive(n)
    return spatial.evaluate(data, MODELS[n])


def random_link(rng, friction=True):
    L = rng.uniform(0.3, 2.0)
    return {"m": rng.uniform(0.5, 20.0), "L": L, "c": rng.uniform(0.1, 0.9) * L,
            "I": rng.uniform(0.01, 2.0), "C": rng.uniform(0.1, 5.0),
            "T": rng.uniform(0.1, 5.0) if friction else 0.0, "wt": rng.uniform(0.05, 1.0)}


def random_state(rng, n, max_cone_deg=80.0):
    """3n unit vectors within the cone about the downward vertical, then 3n perpendicular rates."""
    es, eds = [], []
    for _ in range(n):
        cone = math.radians(max_cone_deg) * math.sqrt(rng.uniform(0.0, 1.0))
        phi = rng.uniform(0.0, 2.0 * math.pi)
        e = np.array([math.sin(cone) * math.cos(phi), -math.cos(cone), math.sin(cone) * math.sin(phi)])
        e /= np.linalg.norm(e)
        v = rng.normal(0.0, 1.5, 3)
        v -= np.dot(v, e) * e
        es += list(e)
        eds += list(v)
    return es + eds


def unpack(state, n):
    e = [np.array(state[3 * i:3 * i + 3]) for i in range(n)]
    ed = [np.array(state[3 * n + 3 * i:3 * n + 3 * i + 3]) for i in range(n)]
    return e, ed


def kinematics(links, e, ed, edd):
    """Centre-of-mass positions, velocities and accelerations relative to a fixed base."""
    n = len(links)
    r, v, a = [], [], []
    for k in range(n):
        pre = [sum(links[j]["L"] * x[j] for j in range(k)) + links[k]["c"] * x[k] for x in (e, ed, edd)]
        r.append(pre[0])
        v.append(pre[1])
        a.append(pre[2])
    return r, v, a


def torques(links, e, ed):
    """tau_i and w_rel_i of the isotropic damper plus friction law (written here afresh)."""
    w = [np.cross(e[i], ed[i]) for i in range(len(links))]
    out = []
    for i, l in enumerate(links):
        rel = w[i] - (w[i - 1] if i > 0 else 0.0)
        s = np.linalg.norm(rel)
        tau = -l["C"] * rel - (l["T"] * math.tanh(s / l["wt"]) * rel / s if s > 0 else 0.0)
        out.append((tau, rel))
    return out


def check_planar(rng):
    """Check 1."""
    worst = 0.0
    for n in (1, 2, 3):
        alpha_fn, reaction_fn = sympy_chain.derive(n)
        links = [random_link(rng) for _ in range(n)]
        ax, ay = rng.uniform(-3, 3), rng.uniform(-3, 3)
        planar_params = [G, ax, ay]
        for key in ("m", "L", "c", "I", "C", "T", "wt"):
            planar_params += [l[key] for l in links]
        states, expected_acc, expected_f = [], [], []
        for _ in range(20):
            th = rng.uniform(-1.3, 1.3, n)
            om = rng.uniform(-2.5, 2.5, n)
            alpha = [float(x) for x in alpha_fn(list(th), list(om), planar_params)]
            reaction = [float(x) for x in reaction_fn(list(th), list(om), alpha, planar_params)]
            e = [np.array([math.sin(x), -math.cos(x), 0.0]) for x in th]
            tangent = [np.array([math.cos(x), math.sin(x), 0.0]) for x in th]
            states.append([float(x) for v in e for x in v]
                          + [float(x) for i in range(n) for x in om[i] * tangent[i]])
            expected_acc.append([float(x) for i in range(n)
                                 for x in alpha[i] * tangent[i] - om[i] ** 2 * e[i]])
            expected_f.append([x for i in range(n) for x in (reaction[2 * i], reaction[2 * i + 1], 0.0)])
        out = run({"g": G, "a_base": [ax, ay, 0.0], "links": links, "states": states})
        for got, exp in zip(out["accel"], expected_acc):
            err = max(abs(a - b) for a, b in zip(got, exp)) / max(1.0, max(abs(x) for x in exp))
            worst = max(worst, err)
            check(err <= 1e-10, "planar n=%d: accel %r vs planar %r" % (n, got, exp))
        for got, exp in zip(out["reaction"], expected_f):
            err = max(abs(a - b) for a, b in zip(got, exp)) / max(1.0, max(abs(x) for x in exp))
            worst = max(worst, err)
            check(err <= 1e-10, "planar n=%d: reaction %r vs planar %r" % (n, got, exp))
    print("check 1 (planar vs sympy_chain.py, n = 1, 2, 3): worst relative error %.3g" % worst)


def check_conical(rng):
    """Check 2."""
    worst = 0.0
    for m, L, c, I in ((3.0, 2.0, 2.0, 0.0), (12.0, 1.5, 0.6, 0.9)):
        for cone_deg in (5.0, 30.0, 60.0, 75.0):
            for sense in (1.0, -1.0):
                cone = math.radians(cone_deg)
                phi = rng.uniform(0.0, 2.0 * math.pi)
                W = sense * math.sqrt(m * G * c / ((I + m * c * c) * math.cos(cone)))
                e = np.array([math.sin(cone) * math.cos(phi), -math.cos(cone),
                              math.sin(cone) * math.sin(phi)])
                ed = W * np.cross([0.0, 1.0, 0.0], e)
                expected = -W * W * np.array([e[0], 0.0, e[2]])
                out = run({"g": G, "a_base": [0.0, 0.0, 0.0],
                           "links": [{"m": m, "L": L, "c": c, "I": I}],
                           "states": [list(e) + list(ed)]})
                got = np.array(out["accel"][0])
                err = np.max(np.abs(got - expected)) / np.max(np.abs(expected))
                worst = max(worst, err)
                check(err <= 1e-12, "conical (I=%g, cone %g deg): e'' %r, expected %r"
                      % (I, cone_deg, got, expected))
    print("check 2 (conical pendulum, point mass and rod): worst relative error %.3g" % worst)


def check_rotation(rng):
    """Check 3."""
    worst = 0.0
    for n in (2, 3):
        for _ in range(10):
            links = [random_link(rng) for _ in range(n)]
            a_base = list(rng.uniform(-3, 3, 3))
            force = list(rng.uniform(-50, 50, 3))
            state = random_state(rng, n)
            psi = rng.uniform(0.0, 2.0 * math.pi)
            R = np.array([[math.cos(psi), 0.0, math.sin(psi)], [0.0, 1.0, 0.0],
                          [-math.sin(psi), 0.0, math.cos(psi)]])

            def rot(flat):
                return [float(x) for k in range(len(flat) // 3) for x in R @ np.array(flat[3 * k:3 * k + 3])]

            wind = {"force": force, "at": rng.uniform(0.0, 1.0) * links[-1]["L"]}
            out = run({"g": G, "a_base": a_base, "wind": wind, "links": links, "states": [state]})
            out_r = run({"g": G, "a_base": rot(a_base), "wind": dict(wind, force=rot(force)),
                         "links": links, "states": [rot(state)]})
            for key in ("accel", "reaction"):
                exp = rot(out[key][0])
                got = out_r[key][0]
                err = max(abs(a - b) for a, b in zip(got, exp)) / max(1.0, max(abs(x) for x in exp))
                worst = max(worst, err)
                check(err <= 1e-10, "rotation n=%d psi=%g: %s %r vs rotated %r" % (n, psi, key, got, exp))
            check(abs(out_r["energy"][0] - out["energy"][0]) <= 1e-12 * abs(out["energy"][0]) + 1e-12,
                  "rotation n=%d: energy %r vs %r" % (n, out_r["energy"][0], out["energy"][0]))
    print("check 3 (rotation about the vertical, n = 2, 3): worst relative error %.3g" % worst)


def check_energy(rng):
    """Check 4."""
    for n in (1, 2, 3):
        worst, worst_e = 0.0, 0.0
        significant = {"torque": 0, "wind": 0}
        count = 30
        for _ in range(count):
            links = [random_link(rng) for _ in range(n)]
            s_w = rng.uniform(0.0, 1.0) * links[-1]["L"]
            force = rng.uniform(-50, 50, 3)
            state = random_state(rng, n)
            out = run({"g": G, "a_base": [0.0, 0.0, 0.0],
                       "wind": {"force": list(force), "at": s_w}, "links": links, "states": [state]})
            e, ed = unpack(state, n)
            edd = [np.array(out["accel"][0][3 * i:3 * i + 3]) for i in range(n)]
            r, v, a = kinematics(links, e, ed, edd)
            rate_terms = [links[k]["m"] * np.dot(v[k], a[k]) for k in range(n)]
            rate_terms += [links[k]["I"] * np.dot(ed[k], edd[k]) for k in range(n)]
            rate_terms += [links[k]["m"] * G * v[k][1] for k in range(n)]
            torque_power = sum(float(np.dot(tau, rel)) for tau, rel in torques(links, e, ed))
            v_w = sum(links[j]["L"] * ed[j] for j in range(n - 1)) + s_w * ed[n - 1]
            wind_power = float(np.dot(force, v_w))
            lhs = sum(rate_terms)
            scale = sum(abs(x) for x in rate_terms) + abs(torque_power) + abs(wind_power)
            err = abs(lhs - torque_power - wind_power) / scale
            worst = max(worst, err)
            if abs(torque_power) > 1e-3 * scale:
                significant["torque"] += 1
            if abs(wind_power) > 1e-3 * scale:
                significant["wind"] += 1
            energy = sum(0.5 * links[k]["m"] * np.dot(v[k], v[k]) + 0.5 * links[k]["I"] * np.dot(ed[k], ed[k])
                         + links[k]["m"] * G * r[k][1] for k in range(n))
            escale = sum(0.5 * links[k]["m"] * np.dot(v[k], v[k]) + abs(links[k]["m"] * G * r[k][1])
                         for k in range(n))
            err_e = abs(out["energy"][0] - energy) / escale
            worst_e = max(worst_e, err_e)
        check(worst <= 1e-10, "energy identity n=%d: worst relative error %.3g" % (n, worst))
        check(worst_e <= 1e-12, "energy value n=%d: worst relative error %.3g" % (n, worst_e))
        for key, k in significant.items():
            check(k >= count // 2, "energy identity n=%d: %s power significant in only %d of %d states"
                  % (n, key, k, count))
        print("check 4 (energy, n = %d): dE/dt worst relative error %.3g, E worst %.3g over %d states"
              % (n, worst, worst_e, count))


def check_euler(rng):
    """Check 5."""
    worst = 0.0
    for n in (1, 2, 3):
        for _ in range(10):
            links = [random_link(rng) for _ in range(n)]
            s_w = rng.uniform(0.0, 1.0) * links[-1]["L"]
            force = rng.uniform(-50, 50, 3)
            state = random_state(rng, n)
            out = run({"g": G, "a_base": list(rng.uniform(-3, 3, 3)),
                       "wind": {"force": list(force), "at": s_w}, "links": links, "states": [state]})
            e, ed = unpack(state, n)
            edd = [np.array(out["accel"][0][3 * i:3 * i + 3]) for i in range(n)]
            F = [np.array(out["reaction"][0][3 * i:3 * i + 3]) for i in range(n)]
            tau = [x for x, _ in torques(links, e, ed)]
            for i in range(n):
                l = links[i]
                parts = [np.cross(-l["c"] * e[i], F[i]), tau[i]]
                if i + 1 < n:
                    parts += [np.cross((l["L"] - l["c"]) * e[i], -F[i + 1]), -tau[i + 1]]
                else:
                    parts.append(np.cross((s_w - l["c"]) * e[i], force))
                moment = sum(parts)
                moment -= np.dot(moment, e[i]) * e[i]
                expected = l["I"] * np.cross(e[i], edd[i])
                scale = max(1e-300, max(np.max(np.abs(p)) for p in parts + [expected]))
                err = np.max(np.abs(moment - expected)) / scale
                worst = max(worst, err)
                check(err <= 1e-10, "Euler n=%d link %d: moment %r vs I e x e'' %r" % (n, i, moment, expected))
    print("check 5 (Euler's law per link, n = 1, 2, 3): worst relative error %.3g" % worst)


def check_interface(rng):
    """Check 6."""
    script = os.path.join(HERE, "sympy_spatial_chain.py")
    links = [random_link(rng) for _ in range(2)]
    data = {"g": G, "a_base": [0.3, 0.0, -0.2], "wind": {"force": [5.0, 0.0, 2.0], "at": 0.1},
            "links": links, "states": [random_state(rng, 2), random_state(rng, 2)]}
    proc = subprocess.run([sys.executable, script], input=json.dumps(data), capture_output=True,
                          text=True, check=False)
    check(proc.returncode == 0, "interface: exit status %d, stderr %s" % (proc.returncode, proc.stderr))
    if proc.returncode == 0:
        out = json.loads(proc.stdout)
        check(set(out) == {"accel", "reaction", "energy"}, "interface: keys %r" % sorted(out))
        check(all(len(out[k]) == 2 for k in out), "interface: one entry per state")
        check(all(len(row) == 6 for k in ("accel", "reaction") for row in out[k]),
              "interface: rows of 3N numbers")
        direct = run(data)
        check(out == json.loads(json.dumps(direct)), "interface: output differs from evaluate()")
    bad_inputs = {
        "short state": dict(data, states=[[0.0, -1.0, 0.0]]),
        "not a unit vector": dict(data, states=[[0.0, -1.1, 0.0, 0.0, -1.0, 0.0] + [0.0] * 6]),
        "rate not perpendicular": dict(data, states=[[0.0, -1.0, 0.0, 0.0, -1.0, 0.0, 0.0, 0.5, 0.0]
                                                     + [0.0] * 3]),
        "outside the chart": dict(data, states=[[0.0, 0.0, 1.0, 0.0, -1.0, 0.0] + [0.0] * 6]),
        "missing mass": dict(data, links=[{"L": 1.0, "c": 0.5, "I": 0.1}] * 2),
        "bad a_base": dict(data, a_base=[0.0, 0.0]),
    }
    for what, bad in bad_inputs.items():
        proc = subprocess.run([sys.executable, script], input=json.dumps(bad), capture_output=True,
                              text=True, check=False)
        check(proc.returncode == 2 and "bad input" in proc.stderr and proc.stdout == "",
              "interface (%s): status %d, stderr %r" % (what, proc.returncode, proc.stderr))
    print("check 6 (JSON interface and malformed input): done")


def main():
    start = time.time()
    rng = np.random.default_rng(20240612)
    check_planar(rng)
    check_conical(rng)
    check_rotation(rng)
    check_energy(rng)
    check_euler(rng)
    check_interface(rng)
    print("%d failure(s), %.1f s" % (len(FAILURES), time.time() - start))
    sys.exit(1 if FAILURES else 0)


if __name__ == "__main__":
    main()
