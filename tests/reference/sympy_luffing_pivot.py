#!/usr/bin/python3
"""Independent reference for the pivot of a slewing and luffing boom, differentiated with SymPy.

    python3 tests/reference/sympy_luffing_pivot.py < input.json > output.json

Input (JSON on stdin):
    {"R0": R0, "psi": [psi0, w, alpha], "times": [t, ...],
     "radial": [u, a]}                                      (radial luffing), or
     "boom": {"b": b, "beta": [beta0, w_b, alpha_b]}}        (boom luffing)
  The slewing angle is psi(t) = psi0 + w t + alpha t^2 / 2 (a profile of constant slewing
  acceleration), the radius R0 + u t + a t^2 / 2 (radial), or the tip of a boom of length b at angle
  beta(t) = beta0 + w_b t + alpha_b t^2 / 2 above the horizontal, its foot at radius R0 - b cos beta0.
Output (JSON on stdout): {"position": [[x, y, z], ...], "velocity": [...], "acceleration": [...]}
  The pivot in the ground frame: x along the boom's start direction, y up, z = x cross y; the
  slewing axis is the vertical through (-R0, 0, 0), the pivot starts at the origin and a positive
  slewing angle turns it from +x towards +z:
    p(t) = (r(t) cos psi(t) - R0, h(t), r(t) sin psi(t)),  h = b (sin beta - sin beta0) (0 radial),
  its velocity and acceleration by SymPy's symbolic differentiation in t (no hand-written
  centripetal, Coriolis or Euler term), evaluated in exact arithmetic at each time and rounded.
Exit status 2 with a message on stderr for malformed input; 3 when sympy is missing.
"""
import json
import sys

try:
    import sympy as sp
except ImportError:  # pragma: no cover
    print("sympy is missing: apt-get install python3-sympy", file=sys.stderr)
    sys.exit(3)


def fail(message):
    print(message, file=sys.stderr)
    sys.exit(2)


def main():
    try:
        data = json.load(sys.stdin)
        R0 = sp.nsimplify(data["R0"], rational=True)
        psi0, w, alpha = (sp.nsimplify(v, rational=True) for v in data["psi"])
        times = [float(t) for t in data["times"]]
    except (KeyError, ValueError, TypeError) as e:
        fail(f"malformed input: {e}")
    t = sp.symbols("t", real=True)
    psi = psi0 + w * t + alpha * t**2 / 2
    if "radial" in data:
        u, a = (sp.nsimplify(v, rational=True) for v in data["radial"])
        r = R0 + u * t + a * t**2 / 2
        h = sp.Integer(0)
    elif "boom" in data:
        b = sp.nsimplify(data["boom"]["b"], rational=True)
        beta0, wb, ab = (sp.nsimplify(v, rational=True) for v in data["boom"]["beta"])
        beta = beta0 + wb * t + ab * t**2 / 2
        r = R0 - b * sp.cos(beta0) + b * sp.cos(beta)
        h = b * (sp.sin(beta) - sp.sin(beta0))
    else:
        fail("give 'radial' or 'boom'")
    p = sp.Matrix([r * sp.cos(psi) - R0, h, r * sp.sin(psi)])
    v = p.diff(t)
    acc = v.diff(t)
    out = {"position": [], "velocity": [], "acceleration": []}
    for time in times:
        at = {t: sp.nsimplify(time, rational=True)}
        for key, expr in (("position", p), ("velocity", v), ("acceleration", acc)):
            out[key].append([float(sp.N(c.subs(at), 30)) for c in expr])
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
