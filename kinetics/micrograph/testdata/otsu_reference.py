# Makes otsu_reference.json and the images in otsu/: Otsu thresholds by
# scikit-image's threshold_otsu and quantiles by numpy.percentile (linear),
# the reference values for otsu_test.go.
# Made with Debian bookworm's python3-skimage 0.19.3 and python3-numpy 1.24.2:
#   /usr/bin/python3 otsu_reference.py     (run inside this testdata folder)
import json, struct, zlib

import numpy as np
import skimage
from skimage.filters import threshold_otsu


def write_png(path, a):
    """Write a 2-D uint8 or uint16 array as a gray PNG (no filtering)."""
    h, w = a.shape
    depth = 16 if a.dtype == np.uint16 else 8
    rows = a.astype('>u2').tobytes() if depth == 16 else a.tobytes()
    stride = w * depth // 8
    raw = b''.join(b'\x00' + rows[y * stride:(y + 1) * stride] for y in range(h))

    def chunk(kind, data):
        c = kind + data
        return struct.pack('>I', len(data)) + c + struct.pack('>I', zlib.crc32(c) & 0xffffffff)

    with open(path, 'wb') as f:
        f.write(b'\x89PNG\r\n\x1a\n')
        f.write(chunk(b'IHDR', struct.pack('>IIBBBBB', w, h, depth, 0, 0, 0, 0)))
        f.write(chunk(b'IDAT', zlib.compress(raw, 9)))
        f.write(chunk(b'IEND', b''))


rng = np.random.default_rng(20240601)


def mix(n, parts, lo, hi, dtype):
    vals = np.concatenate([rng.normal(m, s, int(n * w)) for w, m, s in parts])
    vals = vals[:n] if len(vals) >= n else np.concatenate([vals, rng.normal(parts[0][1], parts[0][2], n - len(vals))])
    rng.shuffle(vals)
    return np.clip(np.rint(vals), lo, hi).astype(dtype)


images = {
    'bimodal8': mix(64 * 48, [(0.3, 80, 12), (0.7, 170, 20)], 0, 255, np.uint8).reshape(48, 64),
    'lowminority8': mix(64 * 64, [(0.95, 140, 9), (0.05, 95, 7)], 0, 255, np.uint8).reshape(64, 64),
    'trimodal8': mix(50 * 40, [(0.4, 40, 8), (0.35, 120, 10), (0.25, 210, 12)], 0, 255, np.uint8).reshape(40, 50),
    'bimodal16': mix(48 * 40, [(0.4, 12000, 1500), (0.6, 40000, 4000)], 0, 65535, np.uint16).reshape(40, 48),
}
out = {'skimage': skimage.__version__, 'numpy': np.__version__, 'images': [], 'histograms': [], 'quantiles': []}
for name, a in images.items():
    path = 'otsu/%s.png' % name
    write_png(path, a)
    out['images'].append({'file': path, 'threshold': int(threshold_otsu(a))})

hists = {
    'two humps': [1, 5, 20, 40, 20, 6, 2, 1, 3, 15, 30, 15, 4],
    'gap tie': [3, 7, 0, 0, 0, 0, 9, 4],
    'random 256': [int(v) for v in rng.integers(1, 1000, 256)],
    'ramp': list(range(1, 41)),
}
for name, h in hists.items():
    out['histograms'].append({'name': name, 'counts': h, 'threshold': int(threshold_otsu(hist=np.array(h)))})

x = sorted(float(v) for v in np.round(rng.lognormal(-11.5, 0.4, 11), 12))
for q in [0.0, 0.1, 0.25, 0.5, 0.9, 1.0]:
    out['quantiles'].append({'data': x, 'q': q, 'value': float(np.percentile(x, 100 * q))})

with open('otsu_reference.json', 'w') as f:
    json.dump(out, f, indent=1)
    f.write('\n')
