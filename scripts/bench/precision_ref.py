#!/usr/bin/python3
"""Independent reference for the precision bench: lobe angles by Poisson maximum likelihood, numpy/scipy/h5py only.

Reads a manifest (JSON list of {file, center_px, n_lobes}) and, for every step of every file, histograms the raw
pixel counts by the azimuth of the pixel centre, theta = atan2(y - y0, x - x0) (FORMATS section 2 without rotation,
mirror or ellipticity; x = column, y = row), in 360 bins over the whole image (no radial gate), and fits
lambda(theta) = B + sum_k A_k exp(kappa_k (cos(theta - mu_k) - 1)) over the full circle by minimising
sum_i [lambda_i - N_i ln lambda_i] (SCIENCE.md section 9.1 item 1) with scipy.optimize.minimize (L-BFGS-B,
analytic gradient, bounds A, B >= 0, kappa > 0). Start: the n-fold harmonic direction of the histogram
(section 9.1 item 3), lobes spaced 360/n apart; widths from 20 degrees. Amplitudes are scaled by the mean bin
content and kappa enters as ln kappa, so that the quasi-Newton steps are well conditioned; the fit is run twice. Written from the formulas for this bench.

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
    # parameters x = [b, a_1, mu_1, ln kappa_1, ...], b and a in units of the mean bin content (conditioning);
    # objective sum(lambda - N ln lambda) divided by the total counts
    scale = max(h.mean(), 1e-9)
    tot = max(h.sum(), 1.0)
    c = np.sum(h * np.cos(n_lobes * CENTRES))
    s = np.sum(h * np.sin(n_lobes * CENTRES))
    phi0 = np.arctan2(s, c) / n_lobes
    mus = phi0 + 2 * np.pi * np.arange(n_lobes) / n_lobes
    b0 = max(np.percentile(h, 5), 1e-3) / scale
    a0 = max(h.max() / scale - b0, 1.0)
    x0 = [b0]
    for m in mus:
        x0 += [a0, m, np.log(1.0 / np.deg2rad(20.0) ** 2)]
    x0 = np.array(x0, dtype=float)

    def nll(x):
        lam = np.full(NB, x[0] * scale)
        parts = []
        for k in range(n_lobes):
            a, mu, lk = x[1 + 3 * k : 4 + 3 * k]
            kap = np.exp(lk)
            cv = np.cos(CENTRES - mu)
            e = np.exp(kap * (cv - 1.0))
            lam = lam + a * scale * e
            parts.append((a, mu, kap, cv, e))
        lam = np.maximum(lam, 1e-300)
        f = np.sum(lam - h * np.log(lam)) / tot
        w = (1.0 - h / lam) / tot
        g = np.empty_like(x)
        g[0] = np.sum(w) * scale
        for k, (a, mu, kap, cv, e) in enumerate(parts):
            g[1 + 3 * k] = np.sum(w * e) * scale
            g[2 + 3 * k] = np.sum(w * a * scale * e * kap * np.sin(CENTRES - mu))
            g[3 + 3 * k] = np.sum(w * a * scale * e * (cv - 1.0) * kap)
        return f, g

    bounds = [(0.0, None)]
    for _ in range(n_lobes):
        bounds += [(0.0, None), (None, None), (np.log(0.05), np.log(5000.0))]
    r = minimize(nll, x0, jac=True, method="L-BFGS-B", bounds=bounds, options={"maxiter": 5000, "ftol": 1e-16, "gtol": 1e-12})
    r = minimize(nll, r.x, jac=True, method="L-BFGS-B", bounds=bounds, options={"maxiter": 5000, "ftol": 1e-16, "gtol": 1e-12})
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
