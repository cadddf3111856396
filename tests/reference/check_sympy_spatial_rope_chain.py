#!/usr/bin/python3
"""Self-check of sympy_spatial_rope_chain.py (spatial chains with ropes of variable length).

Run: /usr/bin/python3 tests/reference/check_sympy_spatial_rope_chain.py   (exit status 0 on success)

Checks, each against a figure obtained independently of the script's own derivation (the checks
work in Cartesian vectors and never use the script's chart):
  1. Planar consistency: with every e_i, e_i' in the x-y plane, a_z = v_z = 0 and no wind, the
     accelerations (e'' mapped as e'' = th'' (cos th, sin th, 0) - th'^2 e, and the rope length's),
     the tension, the reactions and the energy equal those of sympy_rope_chain.py (the planar rope
     reference) for the same chain; 1e-10 relative, an elastic rope above and below a rigid link.
  2. Closed forms for a chain hanging straight down at rest with the base accelerating vertically
     at a_y (Newton's second law along the vertical, with the rope's centre of mass at phi l and
     the link below at l + c_1; from memory): an elastic rope's
        r'' = ((g + a_y)(phi m_0 + m_1) - T) / (phi^2 m_0 + m_1),
     a hoisted rope's drum force P = (g + a_y)(phi m_0 + m_1) - (phi^2 m_0 + m_1) l'', e_i'' = 0
     and the top reaction m_0 (g + a_y - phi l'') + m_1 (g + a_y - l'') upwards; 1e-12 relative.
  3. Rotational invariance about the vertical: rotating a state, a_base, v_base and the wind's
     velocity about y rotates the accelerations and reactions the same way and leaves the tension,
     the drum force and the energy unchanged (1e-10), for the three link patterns.
  4. Energy: E recomputed from the state in Cartesian form (1e-12) and the work-energy identity
        sum_k m_k v_k . a_k + I_k e_k' . e_k'' + 1/2 I_k' |e_k'|^2 + m_k g v_ky
          = P_base + P_damp + P_rope + P_wind + P_drum,
     with a_k from the output accelerations (p_{k+1}'' = p_k'' + l'' e + 2 l' e' + l e''), the powers
     recomputed here from the torque law, the tension, the drag law and the drum force; 1e-10
     relative, each power term asserted significant in most states.
  5. Euler's law per link: the moment about the link's centre of mass of F_i at p_i, -F_{i+1} at
     p_{i+1}, the wind and the pivot torques tau_i - tau_{i+1}, normal to e_i (no twist), equals
     d/dt (I_i(l_i) e_i x e_i') = I_i e_i x e_i'' + I_i' e_i x e_i'; 1e-10 relative.
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
import sympy_rope_chain  # noqa: E402  (planar rope reference, for check 1)
import sympy_spatial_rope_chain as spatial  # noqa: E402
from check_sympy_spatial_chain import torques  # noqa: E402  (the torque law written afresh there)

FAILURES = []
MODELS = {}
G = 9.81
# The derived link patterns (a wind load always present; drag_factor 0 switches it off).
PATTERNS = {("elastic", "rigid"): 1, ("prescribed", "rigid"): 0, ("rigid", "elastic"): 1}


def check(condition, message):
    if not condition:
        FAILURES.append(message)
        print("FAIL: " + message)


def run(data):
    key = (tuple("rigid" if l.get("rope") is None else next(iter(l["rope"])) for l in data["links"]),
           data["wind"]["link"])
    if key not in MODELS:
        MODELS[key] = spatial.derive(*key)
    return spatial.evaluate(data, MODELS[key])


def random_link(rng, kind, friction=True):
    L = rng.uniform(2.0, 12.0) if kind != "rigid" else rng.uniform(0.5, 2.0)
    link = {"m": rng.uniform(5.0, 60.0) if kind != "rigid" else rng.uniform(100.0, 900.0), "L": L,
            "c": rng.uniform(0.2, 0.8) * L, "I": rng.uniform(1.0, 300.0), "C": rng.uniform(50.0, 3e3),
            "T": rng.uniform(10.0, 200.0) if friction else 0.0, "wt": rng.uniform(0.02, 0.5), "rope": None}
    if kind == "elastic":
        link["rope"] = {"elastic": {"parts": float(rng.integers(1, 5)), "EA": rng.uniform(1e6, 2e7),
                                    "c_axial": rng.uniform(1e2, 5e3), "ell": L * rng.uniform(0.8, 1.0),
                                    "ell_dot": rng.uniform(-0.5, 0.5)}}
    elif kind == "prescribed":
        link["rope"] = {"prescribed": {"l": L * rng.uniform(0.7, 1.0), "l_dot": rng.uniform(-0.8, 0.8),
                                       "l_ddot": rng.uniform(-0.6, 0.6)}}
    return link


def random_chain(rng, pattern, friction=True):
    wind_link = PATTERNS[pattern]
    links = [random_link(rng, kind, friction) for kind in pattern]
    return {"g": G, "a_base": list(rng.uniform(-2, 2, 3)), "v_base": list(rng.uniform(-1.5, 1.5, 3)),
            "wind": {"link": wind_link, "at": rng.uniform(0.1, 0.9) * links[wind_link]["L"],
                     "drag_factor": rng.uniform(0.5, 3.0),
                     "velocity": [rng.uniform(-12, 12), 0.0, rng.uniform(-12, 12)]},
            "links": links}


def random_state(rng, data, max_cone_deg=75.0):
    """e_i within the cone about the downward vertical, perpendicular rates; elastic lengths
    stretched by 1e-4 to 5e-3 of the unstretched length, stretch rates up to 0.3 m/s."""
    es, eds, rs, rds = [], [], [], []
    for link in data["links"]:
        cone = math.radians(max_cone_deg) * math.sqrt(rng.uniform(0.0, 1.0))
        phi = rng.uniform(0.0, 2.0 * math.pi)
        e = np.array([math.sin(cone) * math.cos(phi), -math.cos(cone), math.sin(cone) * math.sin(phi)])
        e /= np.linalg.norm(e)
        v = rng.normal(0.0, 1.5, 3)
        v -= np.dot(v, e) * e
        es += list(e)
        eds += list(v)
        if link["rope"] is not None and "elastic" in link["rope"]:
            el = link["rope"]["elastic"]
            rs.append(el["ell"] * (1 + rng.uniform(1e-4, 5e-3)))
            rds.append(el["ell_dot"] + rng.uniform(-0.3, 0.3))
    return [float(x) for x in es + rs + eds + rds]


def lengths(data, state, out, s):
    """Per link: (l, l', l'') from the input, the state and the output accelerations."""
    n = len(data["links"])
    size = len(state) // 2
    r, rd, rdd = state[3 * n:size], state[size + 3 * n:], out["accel"][s][3 * n:]
    result, i = [], 0
    for link in data["links"]:
        rope = link["rope"]
        if rope is None:
            result.append((link["L"], 0.0, 0.0))
        elif "elastic" in rope:
            result.append((r[i], rd[i], rdd[i]))
            i += 1
        else:
            p = rope["prescribed"]
            result.append((p["l"], p["l_dot"], p["l_ddot"]))
    return result


def kinematics(data, state, out, s):
    """Cartesian e, e', e'', lengths, centres of mass (position, velocity, acceleration, with the
    base at the origin moving at v_base, a_base), the pivots likewise, and the inertias and their
    rates, all from the state and the output accelerations."""
    n = len(data["links"])
    size = len(state) // 2
    e = [np.array(state[3 * i:3 * i + 3]) for i in range(n)]
    ed = [np.array(state[size + 3 * i:size + 3 * i + 3]) for i in range(n)]
    edd = [np.array(out["accel"][s][3 * i:3 * i + 3]) for i in range(n)]
    ls = lengths(data, state, out, s)
    p = [(np.zeros(3), np.array(data["v_base"]), np.array(data["a_base"]))]
    com, inertia = [], []
    for k, link in enumerate(data["links"]):
        l, ld, ldd = ls[k]
        frac = (link["c"] / link["L"]) if link["rope"] is not None else None
        c, cd, cdd = (frac * l, frac * ld, frac * ldd) if frac is not None else (link["c"], 0.0, 0.0)
        along = lambda x, xd, xdd: (x * e[k], xd * e[k] + x * ed[k],  # noqa: E731
                                    xdd * e[k] + 2 * xd * ed[k] + x * edd[k])
        com.append(tuple(pk + ck for pk, ck in zip(p[k], along(c, cd, cdd))))
        p.append(tuple(pk + lk for pk, lk in zip(p[k], along(l, ld, ldd))))
        if link["rope"] is None:
            inertia.append((link["I"], 0.0))
        else:
            inertia.append((link["I"] * (l / link["L"]) ** 2, 2 * link["I"] * l * ld / link["L"] ** 2))
    return e, ed, edd, ls, com, p, inertia


def wind_point(data, state, out, s):
    """The wind's point velocity and its distance along its link."""
    e, ed, edd, ls, com, p, inertia = kinematics(data, state, out, s)
    k = data["wind"]["link"]
    link = data["links"][k]
    scale = 1.0 if link["rope"] is None else ls[k][0] / link["L"]
    s_w = data["wind"]["at"] * scale
    s_w_dot = data["wind"]["at"] * (0.0 if link["rope"] is None else ls[k][1] / link["L"])
    return p[k][1] + s_w_dot * e[k] + s_w * ed[k], s_w


def wind_force(data, v_w):
    rel = np.array(data["wind"]["velocity"]) - v_w
    return data["wind"]["drag_factor"] * np.linalg.norm(rel) * rel


def rel_err(got, exp, floor=1.0):
    got, exp = np.asarray(got, dtype=float), np.asarray(exp, dtype=float)
    if got.size == 0:
        return 0.0
    return float(np.max(np.abs(got - exp)) / max(floor, float(np.max(np.abs(exp)))))


def check_planar(rng):
    """Check 1."""
    worst = 0.0
    for pattern in (("elastic", "rigid"), ("rigid", "elastic")):
        for _ in range(3):
            data = random_chain(rng, pattern, friction=False)
            data["a_base"][2] = data["v_base"][2] = 0.0
            data["wind"]["drag_factor"] = 0.0
            planar_links = []
            for link in data["links"]:
                pl = {"m": link["m"], "L": link["L"], "c": link["c"], "I": link["I"], "C": link["C"],
                      "elastic": None}
                if link["rope"] is not None:
                    el = link["rope"]["elastic"]
                    pl["elastic"] = dict(phi=link["c"] / link["L"], I0=link["I"], **el)
                planar_links.append(pl)
            states, planar_states = [], []
            for _ in range(10):
                th, om = rng.uniform(-1.3, 1.3, 2), rng.uniform(-2.5, 2.5, 2)
                k = pattern.index("elastic")
                el = data["links"][k]["rope"]["elastic"]
                r, rd = el["ell"] * (1 + rng.uniform(1e-4, 5e-3)), el["ell_dot"] + rng.uniform(-0.3, 0.3)
                e = [[math.sin(x), -math.cos(x), 0.0] for x in th]
                ed = [[w * math.cos(x), w * math.sin(x), 0.0] for x, w in zip(th, om)]
                states.append([x for v in e for x in v] + [r] + [x for v in ed for x in v] + [rd])
                planar_states.append(list(th) + [r] + list(om) + [rd])
            out = run(dict(data, states=states))
            planar_key = tuple(kind == "elastic" for kind in pattern)
            if planar_key not in MODELS:
                MODELS[planar_key] = sympy_rope_chain.derive(planar_key)
            ref = sympy_rope_chain.evaluate({"g": G, "ax": data["a_base"][0], "ay": data["a_base"][1],
                                             "vxb": data["v_base"][0], "vyb": data["v_base"][1],
                                             "links": planar_links, "states": planar_states},
                                            MODELS[planar_key])
            for s, ps in enumerate(planar_states):
                qdd = ref["qdd"][s]
                acc = [x for i in range(2) for x in (qdd[i] * math.cos(ps[i]) - ps[3 + i] ** 2 * math.sin(ps[i]),
                                                     qdd[i] * math.sin(ps[i]) + ps[3 + i] ** 2 * math.cos(ps[i]),
                                                     0.0)] + [qdd[2]]
                reaction = [x for i in range(2) for x in (ref["reaction"][s][2 * i], ref["reaction"][s][2 * i + 1], 0.0)]
                for what, got, exp in (("accel", out["accel"][s], acc), ("tension", out["tension"][s], ref["tension"][s]),
                                       ("reaction", out["reaction"][s], reaction),
                                       ("energy", [out["energy"][s]], [ref["energy"][s]])):
                    err = rel_err(got, exp)
                    worst = max(worst, err)
                    check(err <= 1e-10, "planar %s: %s %r vs planar %r" % (pattern, what, got, exp))
    print("check 1 (planar vs sympy_rope_chain.py): worst relative error %.3g" % worst)


def check_closed_forms(rng):
    """Check 2."""
    worst = 0.0
    for pattern in (("elastic", "rigid"), ("prescribed", "rigid")):
        for _ in range(5):
            data = random_chain(rng, pattern)
            data["wind"]["drag_factor"] = 0.0
            ay = rng.uniform(-2, 2)
            data["a_base"], data["v_base"] = [0.0, ay, 0.0], list(rng.uniform(-1, 1, 3))
            m0, m1 = data["links"][0]["m"], data["links"][1]["m"]
            phi = data["links"][0]["c"] / data["links"][0]["L"]
            geff = G + ay
            rope = data["links"][0]["rope"]
            if pattern[0] == "elastic":
                el = rope["elastic"]
                r, rd = el["ell"] * (1 + rng.uniform(1e-4, 5e-3)), el["ell_dot"] + rng.uniform(-0.3, 0.3)
                state = [0.0, -1.0, 0.0, 0.0, -1.0, 0.0, r] + [0.0] * 6 + [rd]
                out = run(dict(data, states=[state]))
                T = el["parts"] * el["EA"] / el["ell"] * (r - el["ell"]) + el["c_axial"] * (rd - el["ell_dot"])
                ldd = (geff * (phi * m0 + m1) - T) / (phi * phi * m0 + m1)
                pairs = [(out["accel"][0], [0.0] * 6 + [ldd]), (out["tension"][0], [T])]
            else:
                p = rope["prescribed"]
                ldd = p["l_ddot"]
                state = [0.0, -1.0, 0.0, 0.0, -1.0, 0.0] + [0.0] * 6
                out = run(dict(data, states=[state]))
                drum = geff * (phi * m0 + m1) - (phi * phi * m0 + m1) * ldd
                pairs = [(out["accel"][0], [0.0] * 6), (out["drum_force"][0], [drum])]
            top = m0 * (geff - phi * ldd) + m1 * (geff - ldd)
            pairs.append((out["reaction"][0], [0.0, top, 0.0, 0.0, m1 * (geff - ldd), 0.0]))
            for got, exp in pairs:
                err = rel_err(got, exp)
                worst = max(worst, err)
                check(err <= 1e-12, "closed form %s: %r vs %r" % (pattern, got, exp))
    print("check 2 (hanging straight down, vertical base acceleration): worst relative error %.3g" % worst)


def check_rotation(rng):
    """Check 3."""
    worst = 0.0
    for pattern in PATTERNS:
        for _ in range(5):
            data = random_chain(rng, pattern)
            state = random_state(rng, data)
            n = len(pattern)
            size = len(state) // 2
            psi = rng.uniform(0.0, 2.0 * math.pi)
            R = np.array([[math.cos(psi), 0.0, math.sin(psi)], [0.0, 1.0, 0.0],
                          [-math.sin(psi), 0.0, math.cos(psi)]])

            def rot(flat):
                return [float(x) for k in range(len(flat) // 3) for x in R @ np.array(flat[3 * k:3 * k + 3])]

            turned = (rot(state[:3 * n]) + state[3 * n:size] + rot(state[size:size + 3 * n])
                      + state[size + 3 * n:])
            out = run(dict(data, states=[state]))
            out_r = run(dict(data, a_base=rot(data["a_base"]), v_base=rot(data["v_base"]),
                             wind=dict(data["wind"], velocity=rot(data["wind"]["velocity"])), states=[turned]))
            acc = out["accel"][0]
            for what, got, exp in (("accel", out_r["accel"][0], rot(acc[:3 * n]) + acc[3 * n:]),
                                   ("reaction", out_r["reaction"][0], rot(out["reaction"][0])),
                                   ("tension", out_r["tension"][0], out["tension"][0]),
                                   ("drum force", out_r["drum_force"][0], out["drum_force"][0]),
                                   ("energy", out_r["energy"], out["energy"])):
                err = rel_err(got, exp)
                worst = max(worst, err)
                check(err <= 1e-10, "rotation %s psi=%g: %s %r vs %r" % (pattern, psi, what, got, exp))
    print("check 3 (rotation about the vertical): worst relative error %.3g" % worst)


def check_energy(rng):
    """Check 4."""
    for pattern in PATTERNS:
        worst, worst_e, count = 0.0, 0.0, 20
        significant = {"torque": 0, "wind": 0, "base": 0, "rope or drum": 0}
        for _ in range(count):
            data = random_chain(rng, pattern)
            state = random_state(rng, data)
            out = run(dict(data, states=[state]))
            e, ed, edd, ls, com, p, inertia = kinematics(data, state, out, 0)
            links = data["links"]
            n = len(links)
            terms = [links[k]["m"] * np.dot(com[k][1], com[k][2]) for k in range(n)]
            terms += [inertia[k][0] * np.dot(ed[k], edd[k]) + 0.5 * inertia[k][1] * np.dot(ed[k], ed[k])
                      for k in range(n)]
            terms += [links[k]["m"] * G * com[k][1][1] for k in range(n)]
            torque = sum(float(np.dot(tau, rel)) for tau, rel in torques(links, e, ed))
            v_w, _ = wind_point(data, state, out, 0)
            wind = float(np.dot(wind_force(data, v_w), v_w))
            base = float(np.dot(out["reaction"][0][:3], data["v_base"]))
            rope = 0.0
            i_el = i_pr = 0
            for k, link in enumerate(links):
                if link["rope"] is None:
                    continue
                if "elastic" in link["rope"]:
                    rope -= out["tension"][0][i_el] * ls[k][1]
                    i_el += 1
                else:
                    rope -= out["drum_force"][0][i_pr] * ls[k][1]
                    i_pr += 1
            powers = {"torque": torque, "wind": wind, "base": base, "rope or drum": rope}
            scale = sum(abs(x) for x in terms) + sum(abs(x) for x in powers.values())
            err = abs(sum(terms) - sum(powers.values())) / scale
            worst = max(worst, err)
            err_rate = abs(out["energy_rate"][0] - sum(terms)) / scale
            worst = max(worst, err_rate)
            for key, value in powers.items():
                if abs(value) > 1e-3 * scale:
                    significant[key] += 1
            energy = sum(0.5 * links[k]["m"] * np.dot(com[k][1], com[k][1])
                         + 0.5 * inertia[k][0] * np.dot(ed[k], ed[k]) + links[k]["m"] * G * com[k][0][1]
                         for k in range(n))
            escale = sum(0.5 * links[k]["m"] * np.dot(com[k][1], com[k][1]) + abs(links[k]["m"] * G * com[k][0][1])
                         for k in range(n))
            worst_e = max(worst_e, abs(out["energy"][0] - energy) / escale)
        check(worst <= 1e-10, "energy identity %s: worst relative error %.3g" % (pattern, worst))
        check(worst_e <= 1e-12, "energy value %s: worst relative error %.3g" % (pattern, worst_e))
        for key, k in significant.items():
            check(k >= count // 2, "energy identity %s: %s power significant in only %d of %d states"
                  % (pattern, key, k, count))
        print("check 4 (energy, %s): dE/dt worst relative error %.3g, E worst %.3g over %d states"
              % ("/".join(pattern), worst, worst_e, count))


def check_euler(rng):
    """Check 5."""
    worst = 0.0
    for pattern in PATTERNS:
        for _ in range(10):
            data = random_chain(rng, pattern)
            state = random_state(rng, data)
            out = run(dict(data, states=[state]))
            e, ed, edd, ls, com, p, inertia = kinematics(data, state, out, 0)
            links = data["links"]
            n = len(links)
            F = [np.array(out["reaction"][0][3 * i:3 * i + 3]) for i in range(n)]
            tau = [x for x, _ in torques(links, e, ed)]
            v_w, s_w = wind_point(data, state, out, 0)
            for i in range(n):
                c = float(np.dot(com[i][0] - p[i][0], e[i]))
                parts = [np.cross(-c * e[i], F[i]), tau[i]]
                if i + 1 < n:
                    parts += [np.cross((ls[i][0] - c) * e[i], -F[i + 1]), -tau[i + 1]]
                if data["wind"]["link"] == i:
                    parts.append(np.cross((s_w - c) * e[i], wind_force(data, v_w)))
                moment = sum(parts)
                moment -= np.dot(moment, e[i]) * e[i]
                expected = inertia[i][0] * np.cross(e[i], edd[i]) + inertia[i][1] * np.cross(e[i], ed[i])
                scale = max(1e-300, max(np.max(np.abs(x)) for x in parts + [expected]))
                err = np.max(np.abs(moment - expected)) / scale
                worst = max(worst, err)
                check(err <= 1e-10, "Euler %s link %d: moment %r vs d/dt(I e x e') %r" % (pattern, i, moment, expected))
    print("check 5 (Euler's law per link): worst relative error %.3g" % worst)


def check_interface(rng):
    """Check 6."""
    script = os.path.join(HERE, "sympy_spatial_rope_chain.py")
    data = random_chain(rng, ("elastic", "rigid"))  # one link of it (a quick derivation), wind on it
    data = dict(data, links=data["links"][:1], wind=dict(data["wind"], link=0, at=0.5 * data["links"][0]["L"]))
    data["states"] = [random_state(rng, data), random_state(rng, data)]
    proc = subprocess.run([sys.executable, script], input=json.dumps(data), capture_output=True,
                          text=True, check=False)
    check(proc.returncode == 0, "interface: exit status %d, stderr %s" % (proc.returncode, proc.stderr))
    if proc.returncode == 0:
        out = json.loads(proc.stdout)
        check(all(len(out[k]) == 2 for k in out), "interface: one entry per state")
        check(all(len(row) == 4 for row in out["accel"]), "interface: accel rows of 3N + 1 numbers")
        check(out == json.loads(json.dumps(run(data))), "interface: output differs from evaluate()")
    link0 = data["links"][0]
    bad_inputs = {
        "short state": dict(data, states=[data["states"][0][:-1]]),
        "not a unit vector": dict(data, states=[[0.0, -1.1, 0.0] + data["states"][0][3:]]),
        "bad rope kind": dict(data, links=[dict(link0, rope={"stretchy": {}})]),
        "missing EA": dict(data, links=[dict(link0, rope={"elastic": {"parts": 1, "ell": 3.0, "ell_dot": 0.0,
                                                                        "c_axial": 0.0}})]),
        "wind on no link": dict(data, wind=dict(data["wind"], link=1)),
    }
    for what, bad in bad_inputs.items():
        proc = subprocess.run([sys.executable, script], input=json.dumps(bad), capture_output=True,
                              text=True, check=False)
        check(proc.returncode == 2 and "bad input" in proc.stderr and proc.stdout == "",
              "interface (%s): status %d, stderr %r" % (what, proc.returncode, proc.stderr))
    print("check 6 (JSON interface and malformed input): done")


def main():
    start = time.time()
    rng = np.random.default_rng(20261205)
    check_planar(rng)
    check_closed_forms(rng)
    check_rotation(rng)
    check_energy(rng)
    check_euler(rng)
    check_interface(rng)
    print("%d failure(s), %.1f s" % (len(FAILURES), time.time() - start))
    sys.exit(1 if FAILURES else 0)


if __name__ == "__main__":
    main()
