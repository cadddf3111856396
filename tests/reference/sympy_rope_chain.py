#!/usr/bin/python3
"""Independent reference for a planar chain whose links may be elastic, variable-length ropes.

Derived with SymPy from the Lagrangian of the model below; nothing is taken from the C++ sources.
Run with the system python (/usr/bin/python3, which has python3-sympy and numpy):

    /usr/bin/python3 tests/reference/sympy_rope_chain.py < input.json > output.json

Input (JSON on stdin):
    {"g": 9.81, "ax": 0.7, "ay": -0.4, "vxb": 0.3, "vyb": -0.1,
     "links": [{"m": .., "L": .., "c": .., "I": .., "C": ..,
                "elastic": null
                         | {"phi": .., "I0": .., "parts": .., "EA": .., "c_axial": ..,
                            "ell": .., "ell_dot": ..}}, ...],
     "states": [[q_0 .. q_{N-1}, qdot_0 .. qdot_{N-1}], ...]}
  q = (theta_0 .. theta_{n-1}, r_i for every elastic link i in link order), N = n + (elastic links).
  For an elastic link "L" is its reference length (for the inertia scaling); "c" and "I" are unused.
  "C" (linear rotary damper at the link's upper pivot, N m s/rad) defaults to 0.
Output (JSON on stdout), one entry per state:
    {"qdd": [[theta_0'' .. theta_{n-1}'', r_i'' ..], ...],
     "tension": [[T_i for each elastic link i], ...],
     "reaction": [[Fx_0, Fy_0, Fx_1, Fy_1, ...], ...],
     "energy": [...], "energy_rate": [...],
     "power_base": [...], "power_damp": [...], "power_rope": [...]}
Exit status 2 with a message on stderr for malformed input; 3 when sympy or numpy is missing.

Model (x right, y up, angles from the downward vertical, link 0 at the top)
  * The base (top pivot p_0) moves as (x_b(t), y_b(t)) with x_b'' = ax, y_b'' = ay: a rheonomic
    (prescribed-motion) constraint. Generalised coordinates q: the absolute link angles theta_k,
    then the current length r_i of each elastic link i.
  * Link k has the unit vector e_k = (sin theta_k, -cos theta_k) and the length l_k = r_k (elastic)
    or L_k (rigid); p_{k+1} = p_k + l_k e_k. Its centre of mass is p_k + c_k e_k with c_k = phi_k r_k
    (elastic) or the given c_k (rigid); its inertia about the centre of mass is I_k (rigid) or
    I0_k (r_k / L_k)^2 (elastic).
  * T = sum_k 1/2 m_k |v_k|^2 + 1/2 I_k(r) theta_k'^2 with v_k the inertial velocity of the centre of
    mass (base velocity included), V_g = sum_k m_k g y_k.
  * Lagrange's equations with rheonomic constraints (Greenwood, Principles of Dynamics, 2nd ed.,
    Prentice-Hall 1988, sec. 6.2-6.4; Goldstein, Classical Mechanics, sec. 1.4 and 2.7): with T
    written in inertial velocities and the prescribed coordinates x_b(t), y_b(t) substituted,
        d/dt dL/dq_j' - dL/dq_j = Q_j,     L = T - V_g,
    where Q_j are the generalised forces of the non-gravity forces, from their virtual work
    (virtual displacements at fixed t, so the prescribed base does no virtual work).
  * Rope force: stiffness k_i = parts_i EA_i / ell_i, stretch delta_i = r_i - ell_i, stretch rate
    delta_i' = r_i' - ell_dot_i, tension T_i = k_i delta_i + c_i delta_i' (the taut law, evaluated as
    written, no clamping). It is the potential 1/2 k_i delta_i^2 (with ell_i, k_i frozen at the
    instant) plus the dissipative force -c_i delta_i', i.e. the generalised force Q_{r_i} = -T_i.
  * Pivot dampers: tau_p = -C_p w_p, w_p = theta_p' - theta_{p-1}' (theta_{-1}' = 0) acts on link p
    and its reaction -tau_p on link p-1 (pivot 0: on the base), so
        delta W = sum_p tau_p (delta theta_p - delta theta_{p-1}),  Q_{theta_i} = dW/d(delta theta_i).
  * Accelerations: the equations are linear in q''; SymPy extracts the mass-matrix system
    A q'' = b (linear_eq_to_matrix), A and b are lambdified, and each state's system is solved
    with numpy.linalg.solve (a symbolic solve of the 5x5 system of the three-link case is slow).
    Each tension T_i stands in the equations as a symbol of its own and is evaluated as written,
    k_i (r_i - ell_i) + c_i (r_i' - ell_dot_i): expanding it into k_i r_i - k_i ell_i would cancel
    catastrophically for a stiff rope.
  * Pivot reactions by Newton's second law for the sub-chain below pivot k:
        F_k = sum_{j>=k} m_j (a_j - (0, -g)),  a_j = (symbolic second time derivative of the com),
    F_k being the force on link k at its upper pivot from the body above. This holds for a
    stretching link too: with the base coordinates free, their Euler-Lagrange equations are exactly
    d/dt (total momentum) = external force, because the base enters every com position additively.
  * Energy E = T + V_g evaluated with x_b = y_b = 0 and the given base velocity (vxb, vyb); the rope
    potential is not in E (the rope acts as the force -T_i). dE/dt is the symbolic time derivative
    of T + V_g with the solved q'' substituted. Powers on the chain:
        P_base = F_0 . v_base,   P_damp = sum_p tau_p w_p,   P_rope = -sum_i T_i r_i'.
    Work-energy identity (T is a homogeneous quadratic in (q', x_b', y_b') with no explicit t, so
    with x_b, y_b taken as coordinates, d(T + V_g)/dt = sum of generalised force times velocity;
    Greenwood sec. 6.4, the energy integral): dE/dt = P_base + P_damp + P_rope.
  * The base velocity and position must drop out of the equations of motion and the reactions;
    this is asserted (the base position must also drop out of dE/dt).
The derivation is done once per link pattern (which links are elastic) and lambdified to numpy with
the parameters as arguments (no decimal printing of the numbers), then evaluated per state.
"""
import json
import sys

try:
    import numpy as np
    import sympy as sp
except ImportError as exc:  # the C++ test turns this into a failure with the message below
    sys.stderr.write(
        "sympy_rope_chain.py: cannot import %s with %s; install python3-sympy and python3-numpy "
        "(apt-get install python3-sympy python3-numpy)\n" % (exc.name, sys.executable))
    sys.exit(3)


class InputError(Exception):
    """Malformed JSON input (reported on stderr with exit status 2)."""


def _link_symbols(k, elastic):
    """Parameter symbols of link k: a dict name -> symbol, in a fixed order."""
    s = {"m": sp.Symbol("m%d" % k, positive=True), "C": sp.Symbol("C%d" % k, nonnegative=True)}
    if elastic:
        for name in ("phi", "I0", "L", "parts", "EA", "c_axial", "ell", "ell_dot"):
            s[name] = sp.Symbol("%s_%d" % (name, k), real=True)
    else:
        for name in ("L", "c", "I"):
            s[name] = sp.Symbol("%s_%d" % (name, k), real=True)
    return s


def parameter_names(pattern):
    """(link index, name) for each per-link parameter, in the order derive() expects them."""
    return [(k, name) for k, elastic in enumerate(pattern) for name in _link_symbols(k, elastic)]


def derive(pattern):
    """Derives the model for the link pattern (tuple of bools: elastic or not, link 0 first).

    Returns a dict of numpy functions (see evaluate() for their arguments), with params =
    [g, ax, ay] + per-link values in parameter_names(pattern) order, vb = [vxb, vyb] and tension the
    tensions of the elastic links in link order."""
    pattern = tuple(bool(e) for e in pattern)
    n = len(pattern)
    elastic_links = [k for k in range(n) if pattern[k]]
    t = sp.Symbol("t", real=True)
    g, ax, ay = sp.symbols("g a_x a_y", real=True)
    vbx, vby, xb0, yb0 = sp.symbols("v_bx v_by x_b0 y_b0", real=True)
    P = [_link_symbols(k, pattern[k]) for k in range(n)]

    th = [sp.Function("theta%d" % k, real=True)(t) for k in range(n)]
    rr = {k: sp.Function("r%d" % k, real=True)(t) for k in elastic_links}
    coords = th + [rr[k] for k in elastic_links]
    N = len(coords)
    q = sp.symbols("q0:%d" % N, real=True)
    qd = sp.symbols("qd0:%d" % N, real=True)
    qdd = sp.symbols("qdd0:%d" % N, real=True)
    xb = sp.Function("x_b", real=True)(t)
    yb = sp.Function("y_b", real=True)(t)

    def length(k):
        return rr[k] if pattern[k] else P[k]["L"]

    def com_offset(k):
        return P[k]["phi"] * rr[k] if pattern[k] else P[k]["c"]

    def inertia(k):
        return P[k]["I0"] * (rr[k] / P[k]["L"]) ** 2 if pattern[k] else P[k]["I"]

    # Pivots and centres of mass.
    pivot = [(xb, yb)]
    com = []
    for k in range(n):
        ex, ey = sp.sin(th[k]), -sp.cos(th[k])
        px, py = pivot[k]
        com.append((px + com_offset(k) * ex, py + com_offset(k) * ey))
        pivot.append((px + length(k) * ex, py + length(k) * ey))

    T = sum(sp.Rational(1, 2) * P[k]["m"] * (sp.diff(com[k][0], t) ** 2 + sp.diff(com[k][1], t) ** 2)
            + sp.Rational(1, 2) * inertia(k) * sp.diff(th[k], t) ** 2 for k in range(n))
    V = sum(P[k]["m"] * g * com[k][1] for k in range(n))
    Lag = T - V

    # Generalised forces: pivot dampers by virtual work, rope tension on r_i.
    thd = [sp.diff(th[k], t) for k in range(n)]
    dth = sp.symbols("dtheta0:%d" % n)
    taus = []
    dW = 0
    for p in range(n):
        rel = thd[p] - (thd[p - 1] if p > 0 else 0)
        tau = -P[p]["C"] * rel
        taus.append((tau, rel))
        dW += tau * (dth[p] - (dth[p - 1] if p > 0 else 0))
    dW = sp.expand(dW)
    tension = {}
    for k in elastic_links:
        stiffness = P[k]["parts"] * P[k]["EA"] / P[k]["ell"]
        tension[k] = (stiffness * (rr[k] - P[k]["ell"])
                      + P[k]["c_axial"] * (sp.diff(rr[k], t) - P[k]["ell_dot"]))
    # The equations carry each tension as its own symbol: expanding k (r - ell) into k r - k ell
    # would cancel catastrophically for a stiff rope; the tension is evaluated as written instead.
    tension_sym = sp.symbols("tension0:%d" % len(elastic_links), real=True)
    Q = [dW.coeff(dth[k]) for k in range(n)] + list(-x for x in tension_sym)

    # Replace the time functions by plain symbols, highest derivatives first.
    subs_order = [(sp.diff(coords[j], t, 2), qdd[j]) for j in range(N)]
    subs_order += [(sp.diff(xb, t, 2), ax), (sp.diff(yb, t, 2), ay)]
    subs_order += [(sp.diff(coords[j], t), qd[j]) for j in range(N)]
    subs_order += [(sp.diff(xb, t), vbx), (sp.diff(yb, t), vby)]
    subs_order += [(coords[j], q[j]) for j in range(N)]
    subs_order += [(xb, xb0), (yb, yb0)]

    def plain(expr):
        expr = sp.sympify(expr)
        for a, b in subs_order:
            expr = expr.subs(a, b)
        return expr

    base_state = {vbx, vby, xb0, yb0, t}
    eqs = []
    for j in range(N):
        qj_dot = sp.diff(coords[j], t)
        el = sp.diff(sp.diff(Lag, qj_dot), t) - sp.diff(Lag, coords[j]) - Q[j]
        el = sp.expand(plain(el))
        leaked = el.free_symbols & base_state
        assert not leaked, "base state leaked into equation %d: %s" % (j, leaked)
        eqs.append(el)
    A, b = sp.linear_eq_to_matrix(eqs, qdd)
    assert not (A.free_symbols | b.free_symbols) & (base_state | set(qdd))

    params = [g, ax, ay] + [P[k][name] for k, name in parameter_names(pattern)]
    A_fn = sp.lambdify([q, qd, params], A.tolist(), modules="numpy", cse=True)
    b_fn = sp.lambdify([q, qd, tension_sym, params], list(b), modules="numpy", cse=True)

    # Reactions: Newton for the sub-chain below each pivot.
    acc = [(plain(sp.diff(com[k][0], t, 2)), plain(sp.diff(com[k][1], t, 2))) for k in range(n)]
    F = []
    for i in range(n):
        F.append(sum(P[k]["m"] * acc[k][0] for k in range(i, n)))
        F.append(sum(P[k]["m"] * (acc[k][1] + g) for k in range(i, n)))  # a_k - (0, -g)
    for e in F:
        assert not (e.free_symbols & base_state), "base state leaked into a reaction"
    reaction_fn = sp.lambdify([q, qd, qdd, params], F, modules="numpy", cse=True)

    tension_fn = sp.lambdify([q, qd, params], [plain(tension[k]) for k in elastic_links],
                             modules="numpy", cse=True)
    damp_power = sum(tau * rel for tau, rel in taus)
    damp_fn = sp.lambdify([q, qd, params], plain(damp_power), modules="numpy", cse=True)
    rope_power = -sum(x * sp.diff(rr[k], t) for x, k in zip(tension_sym, elastic_links))
    rope_fn = sp.lambdify([q, qd, tension_sym], plain(rope_power), modules="numpy", cse=True)

    vb = [vbx, vby]
    energy = plain(T + V).subs({xb0: 0, yb0: 0})
    energy_fn = sp.lambdify([q, qd, vb, params], energy, modules="numpy", cse=True)
    energy_rate = plain(sp.diff(T + V, t))
    assert not energy_rate.free_symbols & {xb0, yb0, t}, "base position leaked into dE/dt"
    energy_rate_fn = sp.lambdify([q, qd, qdd, vb, params], energy_rate, modules="numpy", cse=True)

    return {"A": A_fn, "b": b_fn, "reaction": reaction_fn, "tension": tension_fn,
            "power_damp": damp_fn, "power_rope": rope_fn, "energy": energy_fn,
            "energy_rate": energy_rate_fn, "coordinates": N}


def _number(obj, key, where, default=None):
    if key not in obj:
        if default is not None:
            return float(default)
        raise InputError("%s: missing \"%s\"" % (where, key))
    value = obj[key]
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError("%s: \"%s\" must be a number, got %r" % (where, key, value))
    return float(value)


def _pattern_and_params(data):
    links = data.get("links")
    if not isinstance(links, list) or not links:
        raise InputError("\"links\" must be a non-empty list")
    pattern = []
    for k, link in enumerate(links):
        if not isinstance(link, dict):
            raise InputError("links[%d] must be an object" % k)
        elastic = link.get("elastic")
        if elastic is not None and not isinstance(elastic, dict):
            raise InputError("links[%d].elastic must be null or an object" % k)
        pattern.append(elastic is not None)
    params = [_number(data, key, "input") for key in ("g", "ax", "ay")]
    for k, name in parameter_names(pattern):
        link = links[k]
        where = "links[%d]" % k
        if name in ("m", "L"):
            params.append(_number(link, name, where))
        elif name == "C":
            params.append(_number(link, name, where, 0.0))
        elif pattern[k]:
            params.append(_number(link["elastic"], name, where + ".elastic"))
        else:
            params.append(_number(link, name, where))
    return tuple(pattern), params


def evaluate(data, model=None):
    """Evaluates the input dict (the JSON input); returns the output dict. model: derive() result
    for the same pattern, to reuse a derivation."""
    pattern, params = _pattern_and_params(data)
    vb = [_number(data, "vxb", "input"), _number(data, "vyb", "input")]
    if model is None:
        model = derive(pattern)
    N = model["coordinates"]
    states = data.get("states")
    if not isinstance(states, list):
        raise InputError("\"states\" must be a list")
    out = {key: [] for key in ("qdd", "tension", "reaction", "energy", "energy_rate", "power_base",
                               "power_damp", "power_rope")}
    for s_index, s in enumerate(states):
        if not isinstance(s, list) or len(s) != 2 * N:
            raise InputError("states[%d] must hold %d numbers (q then qdot, %d coordinates)"
                             % (s_index, 2 * N, N))
        q = [float(v) for v in s[:N]]
        qd = [float(v) for v in s[N:]]
        tension = [float(v) for v in model["tension"](q, qd, params)]
        A = np.array(model["A"](q, qd, params), dtype=float)
        b = np.array(model["b"](q, qd, tension, params), dtype=float).reshape(N)
        qdd = [float(v) for v in np.linalg.solve(A, b)]
        reaction = [float(v) for v in model["reaction"](q, qd, qdd, params)]
        out["qdd"].append(qdd)
        out["tension"].append(tension)
        out["reaction"].append(reaction)
        out["energy"].append(float(model["energy"](q, qd, vb, params)))
        out["energy_rate"].append(float(model["energy_rate"](q, qd, qdd, vb, params)))
        out["power_base"].append(reaction[0] * vb[0] + reaction[1] * vb[1])
        out["power_damp"].append(float(model["power_damp"](q, qd, params)))
        out["power_rope"].append(float(model["power_rope"](q, qd, tension)))
    return out


def main():
    try:
        data = json.load(sys.stdin)
        if not isinstance(data, dict):
            raise InputError("the input must be a JSON object")
        out = evaluate(data)
    except (InputError, ValueError) as exc:
        sys.stderr.write("sympy_rope_chain.py: bad input: %s\n" % exc)
        sys.exit(2)
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
