#!/usr/bin/python3
"""Independent reference for a spatial (3-D) chain of links on spherical pivots, derived with SymPy.

Run with the system python (/usr/bin/python3, which has python3-sympy and numpy):

    /usr/bin/python3 tests/reference/sympy_spatial_chain.py < input.json > output.json

Input (JSON on stdin):
    {"g": 9.81, "a_base": [ax, ay, az],
     "wind": {"force": [Fx, Fy, Fz], "at": s_w},                        (optional)
     "links": [{"m": .., "L": .., "c": .., "I": .., "C": .., "T": .., "wt": ..}, ...],
     "states": [[e0x, e0y, e0z, e1x, .. (3N numbers), e0'x, e0'y, e0'z, .. (3N numbers)], ...]}
  "m", "L", "c", "I" are required; "C" and "T" default to 0, "wt" to 1 (it must be > 0 when T > 0).
  Each e_i must be a unit vector and each e_i' perpendicular to it (checked to 1e-12), and every e_i
  must lie inside the chart's region (below: |e_iz| <= 0.99).
Output (JSON on stdout), one entry per state:
    {"accel": [[e0''x, e0''y, e0''z, e1''x, .. (3N numbers)], ...],
     "reaction": [[F0x, F0y, F0z, F1x, .. (3N numbers)], ...],
     "energy": [E, ...]}
  energy: one number per state, kinetic + potential with the base at rest at the origin (base
  velocity zero, potential zero at the base's height): E = sum_k 1/2 m_k |r_k'|^2 + 1/2 I_k |e_k'|^2
  + m_k g y_k, r_k relative to the base point.
Exit status 2 with a message on stderr for malformed input; 3 when sympy or numpy is missing.

Model
  * Frame: x horizontal (travel), y up, z = x cross y (horizontal, cross travel). Gravity (0, -g, 0).
  * N links, link 0 at the top, hung from a base point p_0(t) whose acceleration is a_base
    (constant within the call; the base velocity and position drop out, which is asserted).
  * Link i is a straight axisymmetric body along its unit vector e_i (from its upper pivot to its lower
    end), length L_i, mass m_i, centre of mass at c_i from its upper pivot along e_i, transverse moment
    of inertia I_i about its centre of mass. It does not spin about its own axis (twist is not
    modelled): its angular velocity is w_i = e_i x e_i' and its rotational kinetic energy
    1/2 I_i |w_i|^2 = 1/2 I_i |e_i'|^2. Pivots p_{i+1} = p_i + L_i e_i; com r_i = p_i + c_i e_i.
  * Pivot i (upper end of link i) is spherical and joins link i to link i-1 (pivot 0: to the base).
    Its torque acts on link i and reacts (-tau_i) on link i-1 (pivot 0 reacts on the base, which does
    no work through rotation):
        tau_i = -C_i w_rel - T_i tanh(|w_rel| / wt_i) w_rel / |w_rel|,   w_rel = w_i - w_{i-1},
    w_{-1} = 0 (isotropic linear damper plus regularised isotropic Coulomb friction; the friction
    term is 0 when |w_rel| = 0). The torques are evaluated numerically per state from the input
    e_i, e_i'; their generalised forces come from the virtual power sum_i tau_i . (w_i - w_{i-1})
    with the partial angular velocities dw_i/dq_j' = e_i x de_i/dq_j taken symbolically.
  * Wind: an optional constant point force F_w at distance s_w along link N-1 from its upper pivot,
    p_w = p_{N-1} + s_w e_{N-1}; generalised force F_w . dp_w/dq_j (virtual work).
  * Chart, two angles per link: e(a, b) = (sin a cos b, -cos a cos b, sin b), so e = (0, -1, 0) at
    a = b = 0, a is the swing angle in the x-y (travel) plane and b the angle out of it towards +z.
    de/da = cos b (cos a, sin a, 0) and de/db = (-sin a sin b, cos a sin b, cos b) are orthogonal with
    lengths cos b and 1, so the chart is regular wherever cos b > 0, i.e. everywhere except the two
    horizontal directions e = (0, 0, +-1); in particular on the whole open lower hemisphere (cone
    angle from the downward vertical < 90 deg). The script accepts |e_z| <= 0.99 (|b| <= 81.9 deg).
    From a state: b = asin(e_z), a = atan2(e_x, -e_y), a' = e' . (cos a, sin a, 0) / cos b,
    b' = e' . de/db (exact: the two unit tangents are an orthonormal basis of the plane normal to e).
  * Lagrange's equations with the prescribed base (rheonomic constraint), T written in inertial
    velocities, L = T - V, V = sum_k m_k g y_k:
        d/dt dL/dq_j' - dL/dq_j = Q_j,
    formed by SymPy's symbolic differentiation in t. They are linear in q''; the 2N x 2N system
    A q'' = b (A = d(eqs)/dq'', b = -eqs at q'' = 0) is lambdified and solved per state with
    numpy.linalg.solve. The Cartesian accelerations e_i'' are the symbolic second time derivatives of
    e_i(a_i, b_i) (they include the centripetal part -|e_i'|^2 e_i) with q'' substituted.
  * Pivot reactions by Newton's second law for the sub-chain below pivot i:
        F_i = sum_{k>=i} m_k (a_k - (0, -g, 0)) - F_w,   a_k = r_k'' (symbolic),
    F_i being the force exerted on link i at pivot i by the body above (the wind acts on link N-1,
    which is below every pivot).
The derivation is done once per call for the given number of links and lambdified to numpy with the
parameters as arguments (no decimal printing of the numbers).
"""
import json
import math
import sys

try:
    import numpy as np
    import sympy as sp
except ImportError as exc:  # a C++ test turns this into a failure with the message below
    sys.stderr.write(
        "sympy_spatial_chain.py: cannot import %s with %s; install python3-sympy and python3-numpy "
        "(apt-get install python3-sympy python3-numpy)\n" % (exc.name, sys.executable))
    sys.exit(3)

E_Z_LIMIT = 0.99  # |e_z| accepted (the chart is singular at |e_z| = 1)


class InputError(Exception):
    """Malformed JSON input (reported on stderr with exit status 2)."""


def chart(a, b):
    """The unit vector e(a, b) of the chart (works on sympy and numpy arguments alike)."""
    mod = sp if isinstance(a, sp.Basic) else np
    return [mod.sin(a) * mod.cos(b), -mod.cos(a) * mod.cos(b), mod.sin(b)]


def _cross(u, v):
    return [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]]


def _dot(u, v):
    return sum(x * y for x, y in zip(u, v))


def derive(n):
    """Derives the model of an n-link chain. Returns a dict of numpy functions:
    A(q, params), b(q, qd, tau, params), accel(q, qd, qdd), reaction(q, qd, qdd, params),
    energy(q, qd, params), with q = (a_0, b_0, a_1, b_1, ..), tau = 3n torque components and
    params = [g, ax, ay, az, Fwx, Fwy, Fwz, s_w] + m + L + c + I (n each)."""
    t = sp.Symbol("t", real=True)
    g = sp.Symbol("g", real=True)
    acc_base = sp.symbols("a_x a_y a_z", real=True)
    wind = sp.symbols("F_wx F_wy F_wz", real=True)
    s_w = sp.Symbol("s_w", real=True)
    m = sp.symbols("m0:%d" % n, positive=True)
    L = sp.symbols("L0:%d" % n, positive=True)
    c = sp.symbols("c0:%d" % n, positive=True)
    I = sp.symbols("I0:%d" % n, nonnegative=True)
    tau = sp.symbols("tau0:%d" % (3 * n), real=True)
    N = 2 * n
    q = sp.symbols("q0:%d" % N, real=True)
    qd = sp.symbols("qd0:%d" % N, real=True)
    qdd = sp.symbols("qdd0:%d" % N, real=True)
    vb = sp.symbols("v_bx v_by v_bz", real=True)
    pb = sp.symbols("x_b0 y_b0 z_b0", real=True)

    coords = [sp.Function("a%d" % i, real=True)(t) if j == 0 else
              sp.Function("b%d" % i, real=True)(t) for i in range(n) for j in range(2)]
    base = [sp.Function(name, real=True)(t) for name in ("x_b", "y_b", "z_b")]

    e = [chart(coords[2 * i], coords[2 * i + 1]) for i in range(n)]
    pivot = [base]
    com = []
    for k in range(n):
        com.append([pivot[k][d] + c[k] * e[k][d] for d in range(3)])
        pivot.append([pivot[k][d] + L[k] * e[k][d] for d in range(3)])
    wind_point = [pivot[n - 1][d] + s_w * e[n - 1][d] for d in range(3)]

    def vel(vec):
        return [sp.diff(x, t) for x in vec]

    T = sum(sp.Rational(1, 2) * m[k] * _dot(vel(com[k]), vel(com[k]))
            + sp.Rational(1, 2) * I[k] * _dot(vel(e[k]), vel(e[k])) for k in range(n))
    V = sum(m[k] * g * com[k][1] for k in range(n))
    Lag = T - V

    # Replace the time functions by plain symbols, highest derivatives first.
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

    # Generalised forces. Torques: Q_j = sum_i tau_i . (dw_i/dq_j' - dw_{i-1}/dq_j'), where the
    # partial angular velocity of link i is dw_i/dq_j' = e_i x de_i/dq_j (w_i = e_i x e_i').
    # Wind: Q_j = F_w . dp_w/dq_j.
    Q = []
    for j in range(N):
        Qj = 0
        partial = [_cross(e[i], [sp.diff(x, coords[j]) for x in e[i]]) for i in range(n)]
        for i in range(n):
            rel = [partial[i][d] - (partial[i - 1][d] if i > 0 else 0) for d in range(3)]
            Qj += sum(tau[3 * i + d] * rel[d] for d in range(3))
        Qj += sum(wind[d] * sp.diff(wind_point[d], coords[j]) for d in range(3))
        Q.append(Qj)

    base_state = set(vb) | set(pb) | {t}
    eqs = []
    for j in range(N):
        qj_dot = sp.diff(coords[j], t)
        el = sp.diff(sp.diff(Lag, qj_dot), t) - sp.diff(Lag, coords[j]) - Q[j]
        el = sp.expand(plain(el))
        leaked = el.free_symbols & base_state
        assert not leaked, "base state leaked into equation %d: %s" % (j, leaked)
        eqs.append(el)
    A = sp.Matrix(eqs).jacobian(qdd)
    b = -sp.Matrix(eqs).subs({x: 0 for x in qdd})
    assert not (A.free_symbols | b.free_symbols) & (base_state | set(qdd))
    assert not A.free_symbols & set(qd), "the mass matrix depends on the velocities"

    params = [g] + list(acc_base) + list(wind) + [s_w] + list(m) + list(L) + list(c) + list(I)
    A_fn = sp.lambdify([q, params], A.tolist(), modules="numpy", cse=True)
    b_fn = sp.lambdify([q, qd, tau, params], list(b), modules="numpy", cse=True)

    accel = [plain(sp.diff(x, t, 2)) for i in range(n) for x in e[i]]
    accel_fn = sp.lambdify([q, qd, qdd], accel, modules="numpy", cse=True)

    # Reactions: Newton for the sub-chain below each pivot.
    acc = [[plain(sp.diff(x, t, 2)) for x in com[k]] for k in range(n)]
    gravity = [0, -g, 0]
    F = []
    for i in range(n):
        for d in range(3):
            F.append(sum(m[k] * (acc[k][d] - gravity[d]) for k in range(i, n)) - wind[d])
    for x in F:
        assert not (x.free_symbols & base_state), "base state leaked into a reaction"
    reaction_fn = sp.lambdify([q, qd, qdd, params], F, modules="numpy", cse=True)

    energy = plain(T + V).subs({x: 0 for x in list(vb) + list(pb)})
    energy_fn = sp.lambdify([q, qd, params], energy, modules="numpy", cse=True)
    return {"A": A_fn, "b": b_fn, "accel": accel_fn, "reaction": reaction_fn,
            "energy": energy_fn, "links": n}


def _number(obj, key, where, default=None):
    if key not in obj:
        if default is not None:
            return float(default)
        raise InputError("%s: missing \"%s\"" % (where, key))
    value = obj[key]
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("%s: \"%s\" must be a finite number, got %r" % (where, key, value))
    return float(value)


def _vector(obj, key, where):
    value = obj.get(key)
    if (not isinstance(value, list) or len(value) != 3
            or any(isinstance(x, bool) or not isinstance(x, (int, float)) for x in value)):
        raise InputError("%s: \"%s\" must be a list of 3 numbers, got %r" % (where, key, value))
    return [float(x) for x in value]


def _parse(data):
    """(params, torque laws [(C, T, wt)], n) from the input dict."""
    if not isinstance(data, dict):
        raise InputError("the input must be a JSON object")
    links = data.get("links")
    if not isinstance(links, list) or not links:
        raise InputError("\"links\" must be a non-empty list")
    g = _number(data, "g", "input")
    a_base = _vector(data, "a_base", "input")
    wind = data.get("wind")
    if wind is None:
        force, s_w = [0.0, 0.0, 0.0], 0.0
    elif isinstance(wind, dict):
        force, s_w = _vector(wind, "force", "wind"), _number(wind, "at", "wind")
    else:
        raise InputError("\"wind\" must be an object {\"force\": [..], \"at\": ..}")
    per_link = {key: [] for key in ("m", "L", "c", "I")}
    laws = []
    for k, link in enumerate(links):
        where = "links[%d]" % k
        if not isinstance(link, dict):
            raise InputError("%s must be an object" % where)
        for key in per_link:
            per_link[key].append(_number(link, key, where))
        C, Tf, wt = (_number(link, "C", where, 0.0), _number(link, "T", where, 0.0),
                     _number(link, "wt", where, 1.0))
        if Tf != 0.0 and wt <= 0.0:
            raise InputError("%s: \"wt\" must be > 0 when \"T\" is not 0" % where)
        laws.append((C, Tf, wt))
    params = [g] + a_base + force + [s_w]
    for key in ("m", "L", "c", "I"):
        params += per_link[key]
    return params, laws, len(links)


def state_to_chart(s, n, where):
    """(q, qd) of one state (3n unit vectors then 3n rates), checked; InputError when malformed."""
    if (not isinstance(s, list) or len(s) != 6 * n
            or any(isinstance(x, bool) or not isinstance(x, (int, float)) for x in s)):
        raise InputError("%s must hold %d numbers (e_0 .. e_%d then e_0' .. e_%d')"
                         % (where, 6 * n, n - 1, n - 1))
    q, qd = [], []
    for i in range(n):
        e = np.array(s[3 * i:3 * i + 3], dtype=float)
        ed = np.array(s[3 * n + 3 * i:3 * n + 3 * i + 3], dtype=float)
        if abs(np.dot(e, e) - 1.0) > 1e-12:
            raise InputError("%s: e_%d is not a unit vector (|e|^2 - 1 = %.3g)"
                             % (where, i, np.dot(e, e) - 1.0))
        if abs(np.dot(e, ed)) > 1e-12 * max(1.0, np.linalg.norm(ed)):
            raise InputError("%s: e_%d' is not perpendicular to e_%d (e . e' = %.3g)"
                             % (where, i, i, np.dot(e, ed)))
        if abs(e[2]) > E_Z_LIMIT:
            raise InputError("%s: e_%d has |e_z| = %.6g > %.2f, outside the chart's region"
                             % (where, i, abs(e[2]), E_Z_LIMIT))
        a, b = math.atan2(e[0], -e[1]), math.asin(e[2])
        tangent_a = np.array([math.cos(a), math.sin(a), 0.0])      # (de/da) / cos b
        tangent_b = np.array([-math.sin(a) * math.sin(b), math.cos(a) * math.sin(b), math.cos(b)])
        ad, bd = float(np.dot(ed, tangent_a)) / math.cos(b), float(np.dot(ed, tangent_b))
        # Round trip: the chart must reproduce the state.
        back = np.array(chart(a, b))
        back_d = ad * math.cos(b) * tangent_a + bd * tangent_b
        assert np.max(np.abs(back - e)) <= 1e-12, "chart round trip of e_%d" % i
        assert np.max(np.abs(back_d - ed)) <= 1e-12 * max(1.0, np.linalg.norm(ed)), \
            "chart round trip of e_%d'" % i
        q += [a, b]
        qd += [ad, bd]
    return q, qd


def pivot_torques(s, n, laws):
    """The 3n torque components tau_i of one state (Cartesian e, e' as given)."""
    w = [np.cross(np.array(s[3 * i:3 * i + 3], dtype=float),
                  np.array(s[3 * n + 3 * i:3 * n + 3 * i + 3], dtype=float)) for i in range(n)]
    out = []
    for i, (C, Tf, wt) in enumerate(laws):
        rel = w[i] - (w[i - 1] if i > 0 else 0.0)
        speed = float(np.linalg.norm(rel))
        tau = -C * rel
        if Tf != 0.0 and speed > 0.0:
            tau = tau - Tf * math.tanh(speed / wt) * rel / speed
        out += [float(x) for x in tau]
    return out


def evaluate(data, model=None):
    """Evaluates the input dict (the JSON input); returns the output dict. model: a derive() result
    for the same number of links, to reuse a derivation."""
    params, laws, n = _parse(data)
    states = data.get("states")
    if not isinstance(states, list):
        raise InputError("\"states\" must be a list")
    charted = [state_to_chart(s, n, "states[%d]" % k) for k, s in enumerate(states)]
    if model is None:
        model = derive(n)
    assert model["links"] == n
    out = {"accel": [], "reaction": [], "energy": []}
    for s, (q, qd) in zip(states, charted):
        tau = pivot_torques(s, n, laws)
        A = np.array(model["A"](q, params), dtype=float)
        b = np.array(model["b"](q, qd, tau, params), dtype=float).reshape(2 * n)
        qdd = [float(x) for x in np.linalg.solve(A, b)]
        out["accel"].append([float(x) for x in model["accel"](q, qd, qdd)])
        out["reaction"].append([float(x) for x in model["reaction"](q, qd, qdd, params)])
        out["energy"].append(float(model["energy"](q, qd, params)))
    return out


def main():
    try:
        data = json.load(sys.stdin)
        out = evaluate(data)
    except (InputError, ValueError) as exc:
        sys.stderr.write("sympy_spatial_chain.py: bad input: %s\n" % exc)
        sys.exit(2)
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
