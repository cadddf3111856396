#!/usr/bin/python3
"""Independent reference for the swaybound chain dynamics, derived with SymPy.

Run with the system python (/usr/bin/python3, which has python3-sympy and numpy):

    /usr/bin/python3 tests/reference/sympy_chain.py < input.json > output.json

Input (JSON on stdin):
    {"g": 9.81, "ax": 0.7, "ay": -0.4,
     "links": [{"m": .., "L": .., "c": .., "I": .., "C": .., "T": .., "wt": ..}, ...],
     "states": [[theta_0 .. theta_{n-1}, omega_0 .. omega_{n-1}], ...]}
Output (JSON on stdout):
    {"alpha": [[alpha_0 .. alpha_{n-1}], ...],
     "reaction": [[Fx_0, Fy_0, Fx_1, Fy_1, ...], ...]}

What is derived, from scratch (nothing is taken from the C++ sources or its headers' formulas):
  * Geometry: absolute link angles theta_i(t) from the downward vertical, link 0 at the top, x right,
    y up. The top pivot (the base) is at (x_b(t), y_b(t)) with x_b'' = ax, y_b'' = ay. The centre of
    mass of link k is at
        r_k = (x_b + sum_{j<k} L_j sin theta_j + c_k sin theta_k,
               y_b - sum_{j<k} L_j cos theta_j - c_k cos theta_k).
  * Lagrangian L = T - V with T = sum_k 1/2 m_k |r_k'|^2 + 1/2 I_k theta_k'^2 (I_k about the centre
    of mass) and V = sum_k m_k g y_k; the Euler-Lagrange equations
        d/dt dL/dtheta_i' - dL/dtheta_i = Q_i
    are formed by SymPy's symbolic differentiation in t.
  * Generalised forces from the virtual work of the pivot torques: a torque tau_p at pivot p acts on
    link p and its reaction -tau_p on link p-1 (pivot 0 reacts on the base), so
        delta W = sum_p tau_p (delta theta_p - delta theta_{p-1}),   Q_i = dW/d(delta theta_i),
    with tau_p = -C_p w_p - T_p tanh(w_p / wt_p), w_p = omega_p - omega_{p-1}, omega_{-1} = 0
    (linear rotary damper plus regularised constant Coulomb friction).
  * Angular accelerations: the Euler-Lagrange equations are linear in theta''; SymPy extracts the
    mass-matrix system A alpha = b (linear_eq_to_matrix) and solves it symbolically (LUsolve).
  * Pivot reactions by Newton's second law for the sub-chain below each pivot:
        F_i = sum_{k>=i} m_k (a_k - (0, -g)),   a_k = r_k'' (symbolic second time derivative),
    F_i being the force exerted on link i at pivot i by the body above; the solved accelerations are
    substituted numerically.
The derivation is done once per call for the given number of links and lambdified to numpy with the
parameters as arguments (no decimal printing of the numbers), then evaluated per state.
The base velocity and position must drop out of the equations; this is asserted.
"""
import json
import sys

try:
    import numpy as np
    import sympy as sp
except ImportError as exc:  # the C++ test turns this into a failure with the message below
    sys.stderr.write(
        "sympy_chain.py: cannot import %s with %s; install python3-sympy and python3-numpy "
        "(apt-get install python3-sympy python3-numpy)\n" % (exc.name, sys.executable))
    sys.exit(3)


def derive(n):
    """Returns (alpha_fn, reaction_fn), numpy functions of (q, w, params) and (q, w, alpha, params)."""
    t = sp.Symbol("t", real=True)
    g, ax, ay = sp.symbols("g a_x a_y", real=True)
    m = sp.symbols("m0:%d" % n, positive=True)
    L = sp.symbols("L0:%d" % n, positive=True)
    c = sp.symbols("c0:%d" % n, positive=True)
    I = sp.symbols("I0:%d" % n, positive=True)
    C = sp.symbols("C0:%d" % n, nonnegative=True)
    Tc = sp.symbols("T0:%d" % n, nonnegative=True)
    wt = sp.symbols("wt0:%d" % n, positive=True)
    q = sp.symbols("q0:%d" % n, real=True)        # theta_i
    w = sp.symbols("w0:%d" % n, real=True)        # omega_i
    al = sp.symbols("alpha0:%d" % n, real=True)   # alpha_i
    vbx, vby, xb0, yb0 = sp.symbols("v_bx v_by x_b0 y_b0", real=True)

    th = [sp.Function("theta%d" % i, real=True)(t) for i in range(n)]
    xb = sp.Function("x_b", real=True)(t)
    yb = sp.Function("y_b", real=True)(t)

    # Centre-of-mass positions.
    r = []
    for k in range(n):
        x = xb + sum(L[j] * sp.sin(th[j]) for j in range(k)) + c[k] * sp.sin(th[k])
        y = yb - sum(L[j] * sp.cos(th[j]) for j in range(k)) - c[k] * sp.cos(th[k])
        r.append((x, y))

    T = sum(sp.Rational(1, 2) * m[k] * (sp.diff(r[k][0], t) ** 2 + sp.diff(r[k][1], t) ** 2)
            + sp.Rational(1, 2) * I[k] * sp.diff(th[k], t) ** 2 for k in range(n))
    V = sum(m[k] * g * r[k][1] for k in range(n))
    Lag = T - V

    # Pivot torques and their generalised forces by virtual work.
    dth = sp.symbols("dtheta0:%d" % n)  # virtual displacements
    thd = [sp.diff(th[i], t) for i in range(n)]
    dW = 0
    for p in range(n):
        rel = thd[p] - (thd[p - 1] if p > 0 else 0)
        tau = -C[p] * rel - Tc[p] * sp.tanh(rel / wt[p])
        dW += tau * (dth[p] - (dth[p - 1] if p > 0 else 0))
    dW = sp.expand(dW)
    Q = [dW.coeff(dth[i]) for i in range(n)]

    # Replace time functions by plain symbols, highest derivatives first.
    subs_order = []
    for i in range(n):
        subs_order.append((sp.diff(th[i], t, 2), al[i]))
    subs_order += [(sp.diff(xb, t, 2), ax), (sp.diff(yb, t, 2), ay)]
    for i in range(n):
        subs_order.append((sp.diff(th[i], t), w[i]))
    subs_order += [(sp.diff(xb, t), vbx), (sp.diff(yb, t), vby)]
    for i in range(n):
        subs_order.append((th[i], q[i]))
    subs_order += [(xb, xb0), (yb, yb0)]

    def plain(expr):
        for a, b in subs_order:
            expr = expr.subs(a, b)
        return expr

    eqs = []
    for i in range(n):
        el = sp.diff(sp.diff(Lag, thd[i]), t) - sp.diff(Lag, th[i]) - Q[i]
        el = sp.expand(plain(el))
        leaked = el.free_symbols & {vbx, vby, xb0, yb0, t}
        assert not leaked, "base state leaked into equation %d: %s" % (i, leaked)
        eqs.append(el)

    A, b = sp.linear_eq_to_matrix(eqs, al)
    alpha_sol = A.LUsolve(b)

    params = [g, ax, ay] + list(m) + list(L) + list(c) + list(I) + list(C) + list(Tc) + list(wt)
    alpha_fn = sp.lambdify([q, w, params], list(alpha_sol), modules="numpy", cse=True)

    # Reactions: Newton for the sub-chain below each pivot, with a_k = r_k''.
    acc = [(plain(sp.diff(r[k][0], t, 2)), plain(sp.diff(r[k][1], t, 2))) for k in range(n)]
    F = []
    for i in range(n):
        Fx = sum(m[k] * acc[k][0] for k in range(i, n))
        Fy = sum(m[k] * (acc[k][1] + g) for k in range(i, n))  # a_k - (0, -g)
        F += [Fx, Fy]
    for e in F:
        assert not (e.free_symbols & {vbx, vby, xb0, yb0, t})
    reaction_fn = sp.lambdify([q, w, al, params], F, modules="numpy", cse=True)
    return alpha_fn, reaction_fn


def main():
    data = json.load(sys.stdin)
    links = data["links"]
    n = len(links)
    alpha_fn, reaction_fn = derive(n)
    params = [float(data["g"]), float(data["ax"]), float(data["ay"])]
    for key in ("m", "L", "c", "I", "C", "T", "wt"):
        params += [float(l.get(key, 0.0)) if key != "wt" else float(l.get(key, 1.0)) for l in links]
    out_alpha, out_reaction = [], []
    for s in data["states"]:
        q = [float(v) for v in s[:n]]
        w = [float(v) for v in s[n:2 * n]]
        alpha = [float(v) for v in alpha_fn(q, w, params)]
        reaction = [float(v) for v in reaction_fn(q, w, alpha, params)]
        out_alpha.append(alpha)
        out_reaction.append(reaction)
    json.dump({"alpha": out_alpha, "reaction": out_reaction}, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
