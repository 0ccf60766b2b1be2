# The scikit-image reference for the micrograph benchmark: the steps of
# kinetics/micrograph's Analyze on the same PNG, each with the closest
# scikit-image / numpy / scipy function, timed as a lab's script would run.
#   1. read the PNG to gray levels              skimage.io.imread
#   2. flatten: least-squares fit of a degree-2 polynomial surface to
#      ln(1 + I) on a subsample, divide it out  numpy.linalg.lstsq
#   3. smooth: binomial 1 4 6 4 1 (σ = 1 px)    skimage.filters.gaussian(sigma=1)
#   4. Otsu threshold                           skimage.filters.threshold_otsu
#   5. polarity: the smaller class is domains   numpy
#   6. 8-connected labelling, specks < 16 px    skimage.measure.label,
#      dropped                                  skimage.morphology.remove_small_objects
#   7. sizes: areas, area-equivalent diameters  numpy.bincount
# Prints: seconds_min seconds_median coverage  (over N runs, default 5).
# Run with Debian's python3-skimage (bookworm: 0.19.3):
#   /usr/bin/python3 time_pipeline.py IMAGE.png [N]
# The image for the 4096² benchmark: go run ./cmd/foilrun/internal/benchdata micrograph IMAGE.png
import statistics
import sys
import time

import numpy as np
from skimage import filters, io, measure, morphology


def flatten(img):
    h, w = img.shape
    logi = np.log1p(img.astype(np.float64))
    ys, xs = np.mgrid[0:h:8, 0:w:8]
    u, v = xs.ravel() / w - 0.5, ys.ravel() / h - 0.5
    basis = np.stack([np.ones_like(u), u, v, u * u, u * v, v * v], axis=1)
    coef, *_ = np.linalg.lstsq(basis, logi[::8, ::8].ravel(), rcond=None)
    uu = (np.arange(w) / w - 0.5)[None, :]
    vv = (np.arange(h) / h - 0.5)[:, None]
    q = coef[0] + coef[1] * uu + coef[3] * uu * uu + (coef[2] * vv + coef[5] * vv * vv) + coef[4] * vv * uu
    return img * np.exp(q.mean() - q)


def pipeline(path):
    img = io.imread(path, as_gray=False).astype(np.float64)
    if img.ndim == 3:
        img = img[..., :3] @ np.array([0.299, 0.587, 0.114])
    flat = flatten(img)
    smooth = filters.gaussian(flat, sigma=1, preserve_range=True)
    t = filters.threshold_otsu(smooth)
    high = smooth > t
    domains = high if high.mean() <= 0.5 else ~high
    labels = measure.label(domains, connectivity=2)
    labels = morphology.remove_small_objects(labels, min_size=16)
    areas = np.bincount(labels.ravel())[1:]
    areas = areas[areas > 0]
    diameters = 2 * np.sqrt(areas / np.pi)
    return np.count_nonzero(labels) / labels.size, diameters


def main():
    path = sys.argv[1]
    n = int(sys.argv[2]) if len(sys.argv) > 2 else 5
    times, coverage = [], 0.0
    for _ in range(n):
        start = time.perf_counter()
        coverage, _ = pipeline(path)
        times.append(time.perf_counter() - start)
    print(f"{min(times):.4f} {statistics.median(times):.4f} {coverage:.4f}")


if __name__ == "__main__":
    main()
