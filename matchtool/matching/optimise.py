"""A small Nelder-Mead simplex minimiser (numpy only).

Written here rather than imported from scipy.optimize because importing scipy.optimize costs more
start-up time than a whole ``match`` run (benchmark P3); the algorithm is the textbook one.
"""

from __future__ import annotations

import numpy as np


def nelder_mead(cost, x0: np.ndarray, step: float = 0.05, xatol: float = 1e-4, fatol: float = 1e-9,
                maxiter: int | None = None) -> tuple[np.ndarray, float]:
    """Minimise ``cost(x) -> float`` from ``x0`` with the Nelder-Mead simplex; returns (x, cost(x)).

    Standard coefficients (reflection 1, expansion 2, contraction 0.5, shrink 0.5; Nelder & Mead,
    Computer Journal 7 (1965) 308). Initial simplex as scipy's: each vertex moves one coordinate
    by ``step`` (5 %) of its value, or by 0.00025 where the coordinate is 0. Stops, like scipy's
    ``minimize(method="Nelder-Mead")``, when every vertex is within ``xatol`` of the best in every
    coordinate and every vertex cost within ``fatol`` of the best, or after ``maxiter`` iterations
    (default 200 per dimension, scipy's default). Small and dependency-free so that ``match`` does
    not pay for importing scipy.optimize.
    """
    x0 = np.asarray(x0, dtype=float).ravel()
    n = x0.size
    if maxiter is None:
        maxiter = 200 * n
    simplex = np.empty((n + 1, n))
    simplex[0] = x0
    for i in range(n):
        v = x0.copy()
        v[i] = (1 + step) * v[i] if v[i] != 0 else 0.00025
        simplex[i + 1] = v
    fs = np.array([cost(p) for p in simplex], dtype=float)
    for _ in range(maxiter):
        order = np.argsort(fs, kind="stable")
        simplex, fs = simplex[order], fs[order]
        if np.max(np.abs(simplex[1:] - simplex[0])) <= xatol and np.max(np.abs(fs[1:] - fs[0])) <= fatol:
            break
        centroid = simplex[:-1].mean(axis=0)
        xr = 2.0 * centroid - simplex[-1]
        fr = cost(xr)
        if fr < fs[0]:
            xe = 3.0 * centroid - 2.0 * simplex[-1]
            fe = cost(xe)
            simplex[-1], fs[-1] = (xe, fe) if fe < fr else (xr, fr)
        elif fr < fs[-2]:
            simplex[-1], fs[-1] = xr, fr
        else:
            outside = fr < fs[-1]
            xc = centroid + 0.5 * ((xr if outside else simplex[-1]) - centroid)
            fc = cost(xc)
            if (fc <= fr) if outside else (fc < fs[-1]):  # scipy's acceptance rules
                simplex[-1], fs[-1] = xc, fc
            else:
                simplex[1:] = simplex[0] + 0.5 * (simplex[1:] - simplex[0])
                fs[1:] = [cost(p) for p in simplex[1:]]
    k = int(np.argmin(fs))
    return simplex[k].copy(), float(fs[k])
