#!/usr/bin/python3
"""N1 reference timings with Debian's numpy/h5py: the obvious script (h5py read + numpy.fft.rfft(axis=0)[1]) and
numpy's best approach (tensordot projection onto cos/sin), each with and without the read. Prints JSON.
usage: /usr/bin/python3 scripts/bench/n1_numpy.py FILE.h5 REPS PERIODS
(the timed script takes rfft(...)[1] as written; with P whole periods the phase's first harmonic is bin P, which the
agreement probe uses — the cost of the transform is the same)"""
import json
import sys
import time

import h5py
import numpy as np

path, reps, periods = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])


def read():
    with h5py.File(path, 'r') as f:
        return f['/entry/data/counts'][()], f['/entry/data/step'][()]


def rfft(stack):
    return np.fft.rfft(stack, axis=0)[1]


def tensordot(stack, phases):
    c = np.tensordot(np.cos(phases), stack, axes=(0, 0))
    s = np.tensordot(np.sin(phases), stack, axes=(0, 0))
    return c, s


def timed(fn):
    fn()
    out = []
    for _ in range(reps):
        t0 = time.perf_counter()
        fn()
        out.append((time.perf_counter() - t0) * 1e3)
    return out


stack, phases = read()
res = {
    'h5py_read_ms': timed(read),
    'rfft_read_ms': timed(lambda: rfft(read()[0])),
    'rfft_ms': timed(lambda: rfft(stack)),
    'tensordot_read_ms': timed(lambda: tensordot(*read())),
    'tensordot_ms': timed(lambda: tensordot(stack, phases)),
}
# probe pixels for the agreement check: A1 = 2|F1|/N, phi0 = phi_s - arg F1 (SCIENCE.md 6.2)
n = stack.shape[0]
F1 = np.fft.rfft(stack.astype('f8'), axis=0)[periods].ravel()
rng = np.random.default_rng(0)
idx = rng.choice(F1.size, 200, replace=False)
res['probe'] = [{'index': int(i), 'amplitude': float(2 * abs(F1[i]) / n),
                 'phase': float(phases[0] - np.angle(F1[i]))} for i in idx]
print(json.dumps(res))
