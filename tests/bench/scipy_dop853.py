"""SciPy's DOP853 on the equal double pendulum (the same closed form as bench_engine.cpp).

Usage: scipy_dop853.py TOL DURATION REF_THETA1 REF_THETA2 REPEATS
Prints: median wall time of one DURATION trajectory [s], angle error at t = 5 s [rad].
"""
import math
import sys
import time

from scipy.integrate import solve_ivp

G, L = 9.81, 1.0


def rhs(_t, x):
    d = x[1] - x[0]
    s, c = math.sin(d), math.cos(d)
    w1, w2 = x[2], x[3]
    den = 2.0 - c * c
    a1 = (w1 * w1 * s * c + G / L * math.sin(x[1]) * c + w2 * w2 * s - 2.0 * G / L * math.sin(x[0])) / den
    a2 = (-w2 * w2 * s * c + 2.0 * (G / L * math.sin(x[0]) * c - w1 * w1 * s - G / L * math.sin(x[1]))) / den
    return [w1, w2, a1, a2]


def main():
    tol, duration, ref1, ref2, repeats = (float(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3]),
                                          float(sys.argv[4]), int(sys.argv[5]))
    start = [math.radians(120), math.radians(120), 0.0, 0.0]
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        solve_ivp(rhs, (0.0, duration), start, method="DOP853", rtol=tol, atol=tol)
        times.append(time.perf_counter() - t0)
    times.sort()
    at5 = solve_ivp(rhs, (0.0, 5.0), start, method="DOP853", rtol=tol, atol=tol).y[:, -1]
    print(f"{times[len(times) // 2]:.6e} {math.hypot(at5[0] - ref1, at5[1] - ref2):.6e}")


if __name__ == "__main__":
    main()
