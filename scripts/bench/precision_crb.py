#!/usr/bin/python3
"""Cramer-Rao bound of a lobe angle for the precision bench cases, over sigma_phi/sqrt(N) (numpy only).

Model (the generator's angular shape, reduction/synth): lambda(theta) = B + sum_k A exp(kappa (cos(theta - mu_k) - 1))
on 360 bins, each lobe holding N counts, B = bg * N * n_lobes / 360, kappa = 1/width^2. The Poisson Fisher
information I = sum_i grad(lambda_i) grad(lambda_i)^T / lambda_i [H. Cramer 1946; C. R. Rao 1945] with every
amplitude, width and centre free (and B free when there is a background) gives var(mu_1) >= (I^-1)_mu1mu1. The ratio
to sigma_phi/sqrt(N) does not depend on N. Prints one line per case; with a JSON file of cases
[{"mus_deg": [...], "width_deg": w, "bg": f}, ...] as its argument, prints the JSON list of the ratios instead
(the precision bench reads that).
"""

import json
import sys

import numpy as np

TH = np.deg2rad(np.arange(-179.5, 180.0, 1.0))


def bound_ratio(mus_deg, width_deg, bg):
    n = 1e4
    kap = 1.0 / np.deg2rad(width_deg) ** 2
    a = n / np.exp(kap * (np.cos(TH) - 1.0)).sum()
    b = bg * n * len(mus_deg) / 360.0
    p = np.array([b] + sum([[a, np.deg2rad(m), kap] for m in mus_deg], []))

    def lam(q):
        v = q[0] + 0.0 * TH
        for k in range(len(mus_deg)):
            v = v + q[1 + 3 * k] * np.exp(q[3 + 3 * k] * (np.cos(TH - q[2 + 3 * k]) - 1.0))
        return v

    jac = []
    for i in range(len(p)):
        h = 1e-6 * max(abs(p[i]), 1.0)
        up, dn = p.copy(), p.copy()
        up[i] += h
        dn[i] -= h
        jac.append((lam(up) - lam(dn)) / (2 * h))
    jac = np.array(jac)
    info = (jac / lam(p)) @ jac.T
    if bg == 0:
        cov = np.linalg.inv(info[1:, 1:])
        var = cov[1, 1]
    else:
        var = np.linalg.inv(info)[2, 2]
    return np.rad2deg(np.sqrt(var)) / (width_deg / np.sqrt(n))


if len(sys.argv) > 1:
    cases = json.load(open(sys.argv[1]))
    json.dump([bound_ratio(c["mus_deg"], c["width_deg"], c["bg"]) for c in cases], sys.stdout)
else:
    for mus in ([-84.0, 96.0], [-84.0, 36.0, 156.0]):
        for w in (10, 25, 35):
            for bg in (0.0, 0.25):
                r = bound_ratio(mus, w, bg)
                print(f"{len(mus)} lobes, width {w} deg, background {bg}: CRB / (sigma/sqrt(N)) = {r:.3f}")
