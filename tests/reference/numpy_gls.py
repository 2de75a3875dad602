"""Dense generalised least squares with numpy, for tests/reference/numpyGls.test.ts.

An independent solve of the global fit's final linear problem: reads the rows the engine
built (each row's design coefficients and value, and each block's covariance given as its
separate sources), adds the sources up itself into the full N x N data covariance C, forms
the N x p design X, and solves the textbook normal equations
    q = (X^T C^-1 X)^-1 X^T C^-1 y,   Cov(q) = (X^T C^-1 X)^-1,   chi2 = r^T C^-1 r
with numpy.linalg (LU solves, an explicit inverse for the covariance). Nothing of the
engine's code is used: not its factorisation, not its block elimination, not its sum of
the covariance sources. Prints one JSON object with q, the flat covariance and chi2.

    python3 tests/reference/numpy_gls.py problem.json
"""
import json
import sys

import numpy as np


def main(path):
    with open(path) as f:
        prob = json.load(f)
    p = prob["nParams"]
    n = sum(len(b["y"]) for b in prob["blocks"])
    c = np.zeros((n, n))
    x = np.zeros((n, p))
    y = np.zeros(n)
    off = 0
    for b in prob["blocks"]:
        m = len(b["y"])
        for i, row in enumerate(b["rows"]):
            for j, a in zip(row["idx"], row["coef"]):
                x[off + i, j] += a
        y[off:off + m] = b["y"]
        for comp in b["components"]:
            if "diagonal" in comp:
                c[np.arange(off, off + m), np.arange(off, off + m)] += np.array(comp["diagonal"])
            else:
                c[off:off + m, off:off + m] += np.array(comp["dense"])
        off += m
    w = np.linalg.solve(c, np.column_stack([x, y]))
    f = x.T @ w[:, :p]
    q = np.linalg.solve(f, x.T @ w[:, p])
    cov = np.linalg.inv(f)
    r = y - x @ q
    chi2 = float(r @ np.linalg.solve(c, r))
    print(json.dumps({"n": n, "q": q.tolist(), "cov": cov.flatten().tolist(), "chi2": chi2}))


if __name__ == "__main__":
    main(sys.argv[1])
