"""Reference for scripts/bench-simulate.ts: the same double pendulum (m1 = m2 = 1 kg,
l1 = l2 = 1 m, g = 9.81 m/s^2, both angles 2 rad at rest, 20 s, rtol = atol = 1e-10,
output every 0.01 s) with SciPy's solve_ivp and its DOP853, a high-order general-purpose
integrator. The right-hand side is written out by hand (mass matrix and forcing of the
derivation, solved by Cramer's rule), the fastest plain form in Python.

Prints one JSON object: {"ms": median wall time of 7 runs after one warm-up, "cpuMs": median
process CPU time, "nfev", "scipy"}.
Exits with status 3 when SciPy does not import.
"""
import json
import math
import sys
import time

try:
    import numpy as np
    import scipy
    from scipy.integrate import solve_ivp
except ImportError:
    sys.exit(3)

G = 9.81
M1 = M2 = 1.0
L1 = L2 = 1.0


def rhs(_t, x):
    t1, t2, w1, w2 = x
    c = math.cos(t1 - t2)
    s = math.sin(t1 - t2)
    a11 = (M1 + M2) * L1 * L1
    a12 = M2 * L1 * L2 * c
    a22 = M2 * L2 * L2
    f1 = -M2 * L1 * L2 * w2 * w2 * s - (M1 + M2) * L1 * G * math.sin(t1)
    f2 = M2 * L1 * L2 * w1 * w1 * s - M2 * L2 * G * math.sin(t2)
    det = a11 * a22 - a12 * a12
    return [w1, w2, (f1 * a22 - a12 * f2) / det, (a11 * f2 - a12 * f1) / det]


GRID = np.linspace(0.0, 20.0, 2001)


def run():
    return solve_ivp(rhs, (0.0, 20.0), [2.0, 2.0, 0.0, 0.0], method="DOP853", rtol=1e-10, atol=1e-10, t_eval=GRID)


run()
times = []
cpu_times = []
for _ in range(7):
    started = time.perf_counter()
    cpu_started = time.process_time()
    solution = run()
    cpu_times.append(time.process_time() - cpu_started)
    times.append(time.perf_counter() - started)
    if not solution.success:
        sys.exit(4)
times.sort()
cpu_times.sort()
print(json.dumps({"ms": times[3] * 1000, "cpuMs": cpu_times[3] * 1000, "nfev": int(solution.nfev), "scipy": scipy.__version__}))
