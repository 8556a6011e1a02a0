#!/usr/bin/python3
"""Independent reference for the precision bench: lobe angles by Poisson maximum likelihood, numpy/scipy/h5py only.

Reads a manifest (JSON list of {file, center_px, n_lobes}) and, for every step of every file, histograms the raw
pixel counts by the azimuth of the pixel centre, theta = atan2(y - y0, x - x0) (FORMATS section 2 without rotation,
mirror or ellipticity; x = column, y = row), in 360 bins over the whole image (no radial gate), and fits
lambda(theta) = B + sum_k A_k exp(kappa_k (cos(theta - mu_k) - 1)) over the full circle by minimising
sum_i [lambda_i - N_i ln lambda_i] (SCIENCE.md section 9.1 item 1) with scipy.optimize.minimize (L-BFGS-B,
analytic gradient, bounds A, B >= 0, kappa > 0). Start: the n-fold harmonic direction of the histogram
(section 9.1 item 3), lobes spaced 360/n apart; widths from 20 degrees. Written from the formulas for this bench.

Prints JSON {file: [[angle_deg per lobe] per step]} to stdout.
"""

import json
import sys

import h5py
import numpy as np
from scipy.optimize import minimize

NB = 360
EDGES = np.linspace(-np.pi, np.pi, NB + 1)
CENTRES = 0.5 * (EDGES[:-1] + EDGES[1:])


def fit_histogram(h, n_lobes):
    nh = n_lobes
    c = np.sum(h * np.cos(nh * CENTRES))
    s = np.sum(h * np.sin(nh * CENTRES))
    phi0 = np.arctan2(s, c) / nh
    mus = phi0 + 2 * np.pi * np.arange(n_lobes) / n_lobes
    kap0 = 1.0 / np.deg2rad(20.0) ** 2
    b0 = max(np.percentile(h, 5), 1e-3)
    a0 = max(h.max() - b0, 1.0)
    x0 = [b0]
    for m in mus:
        x0 += [a0, m, kap0]
    x0 = np.array(x0, dtype=float)

    def nll(x):
        b = x[0]
        lam = np.full(NB, b)
        parts = []
        for k in range(n_lobes):
            a, mu, kap = x[1 + 3 * k : 4 + 3 * k]
            cv = np.cos(CENTRES - mu)
            e = np.exp(kap * (cv - 1.0))
            lam = lam + a * e
            parts.append((a, mu, kap, cv, e))
        lam = np.maximum(lam, 1e-300)
        f = np.sum(lam - h * np.log(lam))
        w = 1.0 - h / lam
        g = np.empty_like(x)
        g[0] = np.sum(w)
        for k, (a, mu, kap, cv, e) in enumerate(parts):
            g[1 + 3 * k] = np.sum(w * e)
            g[2 + 3 * k] = np.sum(w * a * e * kap * np.sin(CENTRES - mu))
            g[3 + 3 * k] = np.sum(w * a * e * (cv - 1.0))
        return f, g

    bounds = [(0.0, None)]
    for _ in range(n_lobes):
        bounds += [(0.0, None), (None, None), (0.05, 5000.0)]
    r = minimize(nll, x0, jac=True, method="L-BFGS-B", bounds=bounds, options={"maxiter": 2000, "ftol": 1e-15, "gtol": 1e-9})
    mus = r.x[2::3][:n_lobes]
    return [float(np.rad2deg(np.angle(np.exp(1j * m)))) for m in mus]


def main():
    manifest = json.load(open(sys.argv[1]))
    out = {}
    for entry in manifest:
        with h5py.File(entry["file"], "r") as f:
            counts = f["entry/data/counts"]
            ns, ny, nx = counts.shape
            x0, y0 = entry["center_px"]
            yy, xx = np.mgrid[0:ny, 0:nx]
            theta = np.arctan2(yy - y0, xx - x0).ravel()
            idx = np.clip(np.searchsorted(EDGES, theta, side="right") - 1, 0, NB - 1)
            steps = []
            for k in range(ns):
                frame = np.asarray(counts[k], dtype=float).ravel()
                h = np.bincount(idx, weights=frame, minlength=NB)
                steps.append(fit_histogram(h, entry["n_lobes"]))
            out[entry["file"]] = steps
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
