#!/usr/bin/python3
"""Independent reference for a spatial (3-D) chain whose links may be ropes of variable length.

Derived with SymPy from Lagrange's equations in a chart (two angles per link, the rope lengths as
further coordinates); nothing is taken from the C++ sources. Run with the system python:

    /usr/bin/python3 tests/reference/sympy_spatial_rope_chain.py < input.json > output.json

Input (JSON on stdin):
    {"g": 9.81, "a_base": [ax, ay, az], "v_base": [vx, vy, vz],
     "wind": {"link": k, "at": s, "drag_factor": kd, "velocity": [ux, uy, uz]},   (optional)
     "links": [{"m": .., "L": .., "c": .., "I": .., "C": .., "T": .., "wt": ..,
                "rope": null
                      | {"elastic": {"parts": .., "EA": .., "c_axial": .., "ell": .., "ell_dot": ..}}
                      | {"prescribed": {"l": .., "l_dot": .., "l_ddot": ..}}}, ...],
     "states": [[e_0 (3), .., e_{n-1} (3), r_i for each elastic link i (link order),
                 e_0' (3), .., e_{n-1}' (3), r_i' ..], ...]}
  "m", "L", "c", "I" are required (for a rope: its centre of mass and inertia at the length L);
  "C", "T" default to 0, "wt" to 1. Each e_i must be a unit vector with |e_iz| <= 0.99 and e_i'
  perpendicular to it (the chart of sympy_spatial_chain.py, whose state conversion is reused).
Output (JSON on stdout), one entry per state:
    {"accel": [[e_0'' (3), .., e_{n-1}'' (3), r_i'' ..], ...],
     "tension": [[T_i for each elastic link], ...], "drum_force": [[P_k for each prescribed link], ...],
     "reaction": [[F_0x, F_0y, F_0z, F_1x, ..], ...], "energy": [..], "energy_rate": [..],
     "power_base": [..], "power_damp": [..], "power_rope": [..], "power_wind": [..], "power_drum": [..]}
Exit status 2 with a message on stderr for malformed input; 3 when sympy or numpy is missing.

Model (frame and chart as in sympy_spatial_chain.py: x travel, y up, z = x cross y; gravity
(0, -g, 0); e(a, b) = (sin a cos b, -cos a cos b, sin b))
  * The base point p_0(t) moves with acceleration a_base and, at the instant, velocity v_base
    (a rheonomic constraint; its velocity and position must drop out of the equations, asserted).
  * Link k has length l_k: L_k (rigid), a coordinate r_k (elastic rope) or a given function of time
    l_k(t) with l_k, l_k', l_k'' known at the instant (a rope a drum winds without stretching).
    p_{k+1} = p_k + l_k e_k; its centre of mass is p_k + c_k(l_k) e_k with c_k(l) = c_k l / L_k for a
    rope (a fixed fraction of its length), and its inertia about the centre of mass, across its
    axis, is I_k (l_k / L_k)^2 for a rope. No twist: the angular velocity is e_k x e_k'.
  * T = sum_k 1/2 m_k |v_k|^2 + 1/2 I_k(l_k) |e_k'|^2 (inertial velocities), V = sum_k m_k g y_k.
  * Lagrange's equations with rheonomic constraints (Greenwood, Principles of Dynamics, 2nd ed.,
    1988, sec. 6.2-6.4), every length taken as a coordinate q_j:
        E_j = d/dt dL/dq_j' - dL/dq_j - Q_j,   L = T - V,
    E_j = 0 for the free coordinates (angles, elastic lengths); for a prescribed length E_j is the
    generalised force lambda_k the constraint l_k = l_k(t) exerts on it (Lagrange multiplier), and
    the axial force the drum holds is P_k = -lambda_k (a rope pulling its load up acts on l_k, whose
    increase lowers the load, with a negative generalised force).
  * Generalised forces Q_j (virtual work at fixed t):
      - elastic rope: Q_{r_i} = -T_i, T_i = (parts EA / ell) (r_i - ell) + c_axial (r_i' - ell_dot),
        evaluated as written (the taut law; the tension enters the equations as a symbol so that
        k (r - ell) is not expanded into a cancelling difference);
      - pivot torques (sympy_spatial_chain.py's isotropic damper and regularised Coulomb law on
        w_rel = w_i - w_{i-1}, evaluated numerically): sum_i tau_i . (dw_i/dq_j' - dw_{i-1}/dq_j'),
        dw_i/dq_j' = e_i x de_i/dq_j (a length's rate does not turn any link);
      - wind: quadratic drag F_w = kd |u - v_w| (u - v_w) at the point p_w = p_k + s_k e_k of link k,
        s_k = at (rigid) or at l_k / L_k (a rope: the point keeps its fraction of the length),
        v_w its inertial velocity (symbolic, base velocity included): Q_j = F_w . dp_w/dq_j.
  * The equations are linear in q''; A = dE/dq'' and b = -E at q'' = 0 are lambdified; per state
    the free block is solved with numpy.linalg.solve with the prescribed l_k'' moved to the right,
    then lambda_k = (A q'' - b)_k. e_k'' and the centres of mass' accelerations are the symbolic
    second time derivatives with q'' substituted.
  * Pivot reactions by Newton's second law for the sub-chain below pivot i:
        F_i = sum_{k>=i} m_k (a_k + g y) - (F_w if the wind's link is >= i).
  * Energy E = T + V with the base at the origin and velocity v_base; dE/dt its symbolic time
    derivative with q'' substituted. Powers: P_base = F_0 . v_base, P_damp = sum tau_i . w_rel_i,
    P_rope = -sum T_i r_i', P_wind = F_w . v_w, P_drum = sum lambda_k l_k'; the work-energy
    identity dE/dt = P_base + P_damp + P_rope + P_wind + P_drum is a self-check
    (check_sympy_spatial_rope_chain.py).
The derivation is done once per link pattern (rigid / elastic / prescribed per link, and the wind's
link) and lambdified with the parameters as arguments, then evaluated per state.
"""
import json
import math
import os
import sys

try:
    import numpy as np
    import sympy as sp
except ImportError as exc:  # the C++ test turns this into a failure with the message below
    sys.stderr.write(
        "sympy_spatial_rope_chain.py: cannot import %s with %s; install python3-sympy and python3-numpy "
        "(apt-get install python3-sympy python3-numpy)\n" % (exc.name, sys.executable))
    sys.exit(3)

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
# The chart, the state conversion and the pivot torque law are the fixed-length reference's.
from sympy_spatial_chain import (InputError, _cross, _dot, _number, _vector, chart,  # noqa: E402
                                 pivot_torques, state_to_chart)

ELASTIC_KEYS = ("parts", "EA", "c_axial", "ell", "ell_dot")
PRESCRIBED_KEYS = ("l", "l_dot", "l_ddot")


def _link_symbols(k, kind):
    """Parameter symbols of link k of the given kind ('rigid', 'elastic', 'prescribed')."""
    names = ["m", "L", "c", "I"] + list(ELASTIC_KEYS if kind == "elastic" else
                                         PRESCRIBED_KEYS if kind == "prescribed" else [])
    return {name: sp.Symbol("%s_%d" % (name, k), real=True) for name in names}


def derive(pattern, wind_link=None):
    """Derives the model for `pattern` (a tuple of 'rigid' / 'elastic' / 'prescribed', link 0 first)
    with a wind point on link `wind_link` (None: no wind). Returns a dict of numpy functions with
    params = [g, a_x, a_y, a_z, at] + per-link values (m, L, c, I, then the kind's keys)."""
    pattern = tuple(pattern)
    n = len(pattern)
    elastic = [k for k in range(n) if pattern[k] == "elastic"]
    prescribed = [k for k in range(n) if pattern[k] == "prescribed"]
    t = sp.Symbol("t", real=True)
    g = sp.Symbol("g", real=True)
    acc_base = sp.symbols("a_x a_y a_z", real=True)
    at = sp.Symbol("at", real=True)
    vb = sp.symbols("v_bx v_by v_bz", real=True)
    pb = sp.symbols("x_b0 y_b0 z_b0", real=True)
    P = [_link_symbols(k, pattern[k]) for k in range(n)]
    tau = sp.symbols("tau0:%d" % (3 * n), real=True)
    wind = sp.symbols("F_wx F_wy F_wz", real=True)
    tension = sp.symbols("tension0:%d" % len(elastic), real=True)

    angles = [sp.Function("%s%d" % (name, i), real=True)(t) for i in range(n) for name in ("a", "b")]
    lengths = {k: sp.Function("l%d" % k, real=True)(t) for k in elastic + prescribed}
    coords = angles + [lengths[k] for k in elastic] + [lengths[k] for k in prescribed]
    N = len(coords)
    free = 2 * n + len(elastic)
    q = sp.symbols("q0:%d" % N, real=True)
    qd = sp.symbols("qd0:%d" % N, real=True)
    qdd = sp.symbols("qdd0:%d" % N, real=True)
    base = [sp.Function(name, real=True)(t) for name in ("x_b", "y_b", "z_b")]

    def length(k):
        return P[k]["L"] if pattern[k] == "rigid" else lengths[k]

    def along(k, s):
        """The distance along link k of a point at s along it at the reference length."""
        return s if pattern[k] == "rigid" else s * lengths[k] / P[k]["L"]

    def inertia(k):
        return P[k]["I"] if pattern[k] == "rigid" else P[k]["I"] * (lengths[k] / P[k]["L"]) ** 2

    e = [chart(angles[2 * i], angles[2 * i + 1]) for i in range(n)]
    pivot = [base]
    com = []
    for k in range(n):
        com.append([pivot[k][d] + along(k, P[k]["c"]) * e[k][d] for d in range(3)])
        pivot.append([pivot[k][d] + length(k) * e[k][d] for d in range(3)])
    wind_point = None
    if wind_link is not None:
        wind_point = [pivot[wind_link][d] + along(wind_link, at) * e[wind_link][d] for d in range(3)]

    def vel(v):
        return [sp.diff(x, t) for x in v]

    T = sum(sp.Rational(1, 2) * P[k]["m"] * _dot(vel(com[k]), vel(com[k]))
            + sp.Rational(1, 2) * inertia(k) * _dot(vel(e[k]), vel(e[k])) for k in range(n))
    V = sum(P[k]["m"] * g * com[k][1] for k in range(n))
    Lag = T - V

    # Time functions to plain symbols, highest derivatives first.
    subs_order = [(sp.diff(coords[j], t, 2), qdd[j]) for j in range(N)]
    subs_order += [(sp.diff(base[d], t, 2), acc_base[d]) for d in range(3)]
    subs_order += [(sp.diff(coords[j], t), qd[j]) for j in range(N)]
    subs_order += [(sp.diff(base[d], t), vb[d]) for d in range(3)]
    subs_order += [(coords[j], q[j]) for j in range(N)]
    subs_order += [(base[d], pb[d]) for d in range(3)]

    def plain(expr):
        expr = sp.sympify(expr)
        for old, new in subs_order:
            expr = expr.subs(old, new)
        return expr

    Q = []
    for j in range(N):
        Qj = 0
        if j < 2 * n:
            partial = [_cross(e[i], [sp.diff(x, coords[j]) for x in e[i]]) for i in range(n)]
            for i in range(n):
                rel = [partial[i][d] - (partial[i - 1][d] if i > 0 else 0) for d in range(3)]
                Qj += sum(tau[3 * i + d] * rel[d] for d in range(3))
        elif j < free:
            Qj -= tension[j - 2 * n]
        if wind_point is not None:
            Qj += sum(wind[d] * sp.diff(wind_point[d], coords[j]) for d in range(3))
        Q.append(Qj)

    base_state = set(vb) | set(pb) | {t}
    eqs = []
    for j in range(N):
        el = sp.diff(sp.diff(Lag, sp.diff(coords[j], t)), t) - sp.diff(Lag, coords[j]) - Q[j]
        el = sp.expand(plain(el))
        leaked = el.free_symbols & base_state
        assert not leaked, "base state leaked into equation %d: %s" % (j, leaked)
        eqs.append(el)
    A = sp.Matrix(eqs).jacobian(qdd)
    b = -sp.Matrix(eqs).subs({x: 0 for x in qdd})
    assert not (A.free_symbols | b.free_symbols) & (base_state | set(qdd))
    assert not A.free_symbols & set(qd), "the mass matrix depends on the velocities"

    params = [g] + list(acc_base) + [at] + [s for k in range(n) for s in P[k].values()]
    out = {"links": n, "pattern": pattern, "wind_link": wind_link, "coordinates": N, "free": free,
           "elastic": elastic, "prescribed": prescribed}
    lam = lambda args, expr: sp.lambdify(args, expr, modules="numpy", cse=True)  # noqa: E731
    out["A"] = lam([q, params], A.tolist())
    out["b"] = lam([q, qd, tau, wind, tension, params], list(b))
    out["accel"] = lam([q, qd, qdd], [plain(sp.diff(x, t, 2)) for i in range(n) for x in e[i]])
    acc = [[plain(sp.diff(x, t, 2)) for x in com[k]] for k in range(n)]
    gravity = [0, -g, 0]
    F = []
    for i in range(n):
        wind_below = wind_point is not None and wind_link >= i
        for d in range(3):
            F.append(sum(P[k]["m"] * (acc[k][d] - gravity[d]) for k in range(i, n))
                     - (wind[d] if wind_below else 0))
    for x in F:
        assert not x.free_symbols & base_state, "base state leaked into a reaction"
    out["reaction"] = lam([q, qd, qdd, wind, params], F)
    if wind_point is not None:
        out["wind_velocity"] = lam([q, qd, vb, params], [plain(x) for x in vel(wind_point)])
    energy = plain(T + V).subs({x: 0 for x in pb})
    out["energy"] = lam([q, qd, vb, params], energy)
    rate = plain(sp.diff(T + V, t))
    assert not rate.free_symbols & (set(pb) | {t}), "base position leaked into dE/dt"
    out["energy_rate"] = lam([q, qd, qdd, vb, params], rate)
    return out


def _parse(data):
    """(pattern, wind_link, params, torque laws, wind law, v_base) from the input dict."""
    if not isinstance(data, dict):
        raise InputError("the input must be a JSON object")
    links = data.get("links")
    if not isinstance(links, list) or not links:
        raise InputError("\"links\" must be a non-empty list")
    n = len(links)
    params = [_number(data, "g", "input")] + _vector(data, "a_base", "input")
    v_base = _vector(data, "v_base", "input") if "v_base" in data else [0.0, 0.0, 0.0]
    wind = data.get("wind")
    wind_link, wind_law, at = None, None, 0.0
    if wind is not None:
        if not isinstance(wind, dict):
            raise InputError("\"wind\" must be an object")
        wind_link = wind.get("link")
        if isinstance(wind_link, bool) or not isinstance(wind_link, int) or not 0 <= wind_link < n:
            raise InputError("wind: \"link\" must be a link index 0..%d, got %r" % (n - 1, wind_link))
        at = _number(wind, "at", "wind")
        wind_law = (_number(wind, "drag_factor", "wind"), np.array(_vector(wind, "velocity", "wind")))
    params.append(at)
    pattern, laws = [], []
    for k, link in enumerate(links):
        where = "links[%d]" % k
        if not isinstance(link, dict):
            raise InputError("%s must be an object" % where)
        params += [_number(link, key, where) for key in ("m", "L", "c", "I")]
        laws.append((_number(link, "C", where, 0.0), _number(link, "T", where, 0.0),
                     _number(link, "wt", where, 1.0)))
        if laws[-1][1] != 0.0 and laws[-1][2] <= 0.0:
            raise InputError("%s: \"wt\" must be > 0 when \"T\" is not 0" % where)
        rope = link.get("rope")
        if rope is None:
            pattern.append("rigid")
        elif isinstance(rope, dict) and len(rope) == 1 and ("elastic" in rope or "prescribed" in rope):
            kind = "elastic" if "elastic" in rope else "prescribed"
            if not isinstance(rope[kind], dict):
                raise InputError("%s.rope.%s must be an object" % (where, kind))
            pattern.append(kind)
            keys = ELASTIC_KEYS if kind == "elastic" else PRESCRIBED_KEYS
            params += [_number(rope[kind], key, "%s.rope.%s" % (where, kind)) for key in keys]
        else:
            raise InputError("%s.rope must be null, {\"elastic\": {..}} or {\"prescribed\": {..}}" % where)
    return tuple(pattern), wind_link, params, laws, wind_law, v_base


def evaluate(data, model=None):
    """Evaluates the input dict (the JSON input); returns the output dict. model: a derive() result
    for the same pattern and wind link, to reuse a derivation."""
    pattern, wind_link, params, laws, wind_law, v_base = _parse(data)
    n = len(pattern)
    m_el = pattern.count("elastic")
    states = data.get("states")
    if not isinstance(states, list):
        raise InputError("\"states\" must be a list")
    checked = []  # every state is checked before the (slow) derivation
    for s_index, s in enumerate(states):
        where = "states[%d]" % s_index
        size = 3 * n + m_el
        if (not isinstance(s, list) or len(s) != 2 * size
                or any(isinstance(x, bool) or not isinstance(x, (int, float)) for x in s)):
            raise InputError("%s must hold %d numbers (e_0 .. e_%d, %d rope lengths, then their rates)"
                             % (where, 2 * size, n - 1, m_el))
        directions = [float(x) for x in s[:3 * n] + s[size:size + 3 * n]]
        q, qd = state_to_chart(directions, n, where)
        checked.append((directions, q, qd, [float(x) for x in s[3 * n:size]], [float(x) for x in s[size + 3 * n:]]))
    if model is None:
        model = derive(pattern, wind_link)
    assert model["pattern"] == pattern and model["wind_link"] == wind_link
    elastic, prescribed, free, N = model["elastic"], model["prescribed"], model["free"], model["coordinates"]
    # Per-link parameter offsets (after g, a_base, at).
    offset, index = 5, []
    for kind in pattern:
        index.append(offset)
        offset += 4 + (len(ELASTIC_KEYS) if kind == "elastic" else len(PRESCRIBED_KEYS) if kind == "prescribed" else 0)
    keys = ("qdd", "accel", "tension", "drum_force", "reaction", "energy", "energy_rate", "power_base",
            "power_damp", "power_rope", "power_wind", "power_drum")
    out = {key: [] for key in keys}
    for directions, q, qd, r, rd in checked:
        pre = [params[index[k] + 4:index[k] + 7] for k in prescribed]
        q = q + r + [p[0] for p in pre]
        qd = qd + rd + [p[1] for p in pre]
        tension = []
        for i, k in enumerate(elastic):
            parts, EA, c_axial, ell, ell_dot = params[index[k] + 4:index[k] + 9]
            tension.append(parts * EA / ell * (r[i] - ell) + c_axial * (rd[i] - ell_dot))
        tau = pivot_torques(directions, n, laws)
        F_w, v_w = [0.0, 0.0, 0.0], np.zeros(3)
        if wind_law is not None:
            v_w = np.array(model["wind_velocity"](q, qd, v_base, params), dtype=float)
            rel = wind_law[1] - v_w
            F_w = [float(x) for x in wind_law[0] * np.linalg.norm(rel) * rel]
        A = np.array(model["A"](q, params), dtype=float)
        b = np.array(model["b"](q, qd, tau, F_w, tension, params), dtype=float).reshape(N)
        qdd = np.zeros(N)
        qdd[free:] = [p[2] for p in pre]
        qdd[:free] = np.linalg.solve(A[:free, :free], b[:free] - A[:free, free:] @ qdd[free:])
        lam = A[free:] @ qdd - b[free:]
        qdd = [float(x) for x in qdd]
        reaction = [float(x) for x in model["reaction"](q, qd, qdd, F_w, params)]
        w = [np.cross(directions[3 * i:3 * i + 3], directions[3 * n + 3 * i:3 * n + 3 * i + 3]) for i in range(n)]
        damp = sum(float(np.dot(tau[3 * i:3 * i + 3], w[i] - (w[i - 1] if i > 0 else 0.0))) for i in range(n))
        out["qdd"].append(qdd)
        out["accel"].append([float(x) for x in model["accel"](q, qd, qdd)] + qdd[2 * n:free])
        out["tension"].append(tension)
        out["drum_force"].append([-float(x) for x in lam])
        out["reaction"].append(reaction)
        out["energy"].append(float(model["energy"](q, qd, v_base, params)))
        out["energy_rate"].append(float(model["energy_rate"](q, qd, qdd, v_base, params)))
        out["power_base"].append(float(np.dot(reaction[:3], v_base)))
        out["power_damp"].append(damp)
        out["power_rope"].append(-sum(x * y for x, y in zip(tension, rd)))
        out["power_wind"].append(float(np.dot(F_w, v_w)))
        out["power_drum"].append(float(sum(x * qd[free + i] for i, x in enumerate(lam))))
    return out


def main():
    try:
        data = json.load(sys.stdin)
        out = evaluate(data)
    except (InputError, ValueError) as exc:
        sys.stderr.write("sympy_spatial_rope_chain.py: bad input: %s\n" % exc)
        sys.exit(2)
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
