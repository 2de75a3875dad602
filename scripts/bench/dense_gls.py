"""Dense generalised least squares with numpy, for `npm run bench`.

An independent solve of the global fit's final linear problem: reads the rows the engine
exported (design coefficients, values, and each block's covariance), forms the full N x N
data covariance C and the N x p design X, and solves the textbook normal equations
    q = (X^T C^-1 X)^-1 X^T C^-1 y,   Cov(q) = (X^T C^-1 X)^-1
with numpy.linalg (LU solve of C against [X | y], then of the p x p normal matrix).
No structure is used: this is the cost a plain dense GLS pays. Prints one JSON line with
the solution's H0, its statistical error, the wall time of building and solving, and the
peak memory of this process.

    python3 scripts/bench/dense_gls.py problem.json
"""
import json
import math
import resource
import sys
import time

import numpy as np


def main(path):
    with open(path) as f:
        prob = json.load(f)
    p = prob["nParams"]
    names = prob["paramNames"]
    t0 = time.perf_counter()
    n = sum(len(b["y"]) for b in prob["blocks"])
    c = np.zeros((n, n))
    x = np.zeros((n, p))
    y = np.zeros(n)
    off = 0
    for b in prob["blocks"]:
        m = len(b["y"])
        for i, (idx, coef) in enumerate(zip(b["idx"], b["coef"])):
            for j, a in zip(idx, coef):
                x[off + i, j] += a
        y[off:off + m] = b["y"]
        if "variance" in b:
            c[np.arange(off, off + m), np.arange(off, off + m)] = b["variance"]
        else:
            c[off:off + m, off:off + m] = np.array(b["cov"])
        off += m
    t1 = time.perf_counter()
    # C^-1 [X | y] by one LU solve, then the p x p normal equations
    w = np.linalg.solve(c, np.column_stack([x, y]))
    f = x.T @ w[:, :p]
    rhs = x.T @ w[:, p]
    q = np.linalg.solve(f, rhs)
    cov = np.linalg.inv(f)
    t2 = time.perf_counter()
    r = y - x @ q
    chi2 = float(r @ np.linalg.solve(c, r))
    i_mb = names.index("M_B")
    i_ab = names.index("a_B")
    g = np.zeros(p)
    g[i_mb] = 0.2
    g[i_ab] = 1.0
    log10h0 = 0.2 * q[i_mb] + q[i_ab] + 5.0  # log10 H0 = (M_B + 5 a_B + 25) / 5
    var = float(g @ cov @ g)
    h0 = 10.0 ** log10h0
    print(json.dumps({
        "rows": n,
        "params": p,
        "h0": h0,
        "h0_stat": h0 * math.log(10) * math.sqrt(var),
        "chi2": chi2,
        "build_ms": (t1 - t0) * 1000,
        "solve_ms": (t2 - t1) * 1000,
        "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
        "numpy": np.__version__,
    }))


if __name__ == "__main__":
    main(sys.argv[1])
