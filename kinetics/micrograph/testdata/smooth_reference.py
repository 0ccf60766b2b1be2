# Makes smooth_reference.json, the reference values for smooth_test.go:
# a 16-bit field smoothed by the binomial kernel of radius r along rows and
# then along columns, edge pixels repeated (mode 'nearest'), each pass
# rounded half up to an integer, as smooth.go documents.
# Made with Debian bookworm's python3-scipy 1.10.1 and python3-numpy 1.24.2:
#   /usr/bin/python3 smooth_reference.py     (run inside this testdata folder)
# The taps k_j/2^(2r) are dyadic and the sums stay below 2^53, so the float
# arithmetic is exact and floor(x + 0.5) is the integer rounding exactly.
import json
from math import comb

import numpy as np
import scipy
from scipy.ndimage import correlate1d

rng = np.random.default_rng(20240715)
h, w = 11, 7
field = rng.integers(0, 65536, size=(h, w))
field[0, 0], field[h - 1, w - 1], field[5, 3] = 65535, 0, 65535

cases = []
for r in (1, 2, 3, 8):
    taps = np.array([comb(2 * r, j) for j in range(2 * r + 1)], dtype=np.float64) / 2.0 ** (2 * r)
    a = field.astype(np.float64)
    a = np.floor(correlate1d(a, taps, axis=1, mode='nearest') + 0.5)
    a = np.floor(correlate1d(a, taps, axis=0, mode='nearest') + 0.5)
    cases.append({'radius': r, 'want': a.astype(int).ravel().tolist()})

with open('smooth_reference.json', 'w') as f:
    json.dump({'made_with': 'scipy ' + scipy.__version__ + ', numpy ' + np.__version__,
               'width': w, 'height': h, 'field': field.ravel().tolist(), 'cases': cases}, f, indent=1)
