#!/usr/bin/python3
"""JMAK coverage and nuclei density over a linear temperature ramp, by direct nested scipy.integrate.quad of the double integrals (no moment expansion)."""
# Run: /usr/bin/python3 kinetics/testdata/ramp_reference.py > kinetics/testdata/ramp_reference.json
# Model (kinetics package comment): T(t) linear, I = I0 exp(-En/kT) (pC/p0)^a (pH/p0)^-b,
# G = G0 exp(-Eg/kT) (pC - pCeq)/p0 (pH/p0)^-1/2, with pH = 0 (CH4 in argon): pCeq = 0 and the
# H2 factors use the floor pressure 0.01 Pa. X(t) = kappa int_0^t I(tau) (R(t) - R(tau))^2 dtau,
# theta = 1 - exp(-X), N(t) = int_0^t I(tau) exp(-X(tau)) dtau.
import json
import math

import numpy
import scipy
from scipy.integrate import quad
from scipy.optimize import brentq

k = 1.380649e-23 / 1.602176634e-19  # Boltzmann constant, eV/K (exact SI 2019)
En, I0, a, b = 1.0, 1e11, 1.0, 0.0
Eg, G0, p0 = 2.0, 1e-1, 100.0
pC, pH_floor = 50.0, 0.01
T0, T1, D = 1173.15, 1323.15, 1200.0
kappa = math.pi
opts = dict(epsabs=0, epsrel=1e-12, limit=200)


def T(t):
    return T0 + (T1 - T0) * t / D


def I(t):
    return I0 * math.exp(-En / (k * T(t))) * (pC / p0) ** a * (pH_floor / p0) ** (-b)


def G(t):
    return G0 * math.exp(-Eg / (k * T(t))) * pC / p0 / math.sqrt(pH_floor / p0)


def R(t):
    return quad(G, 0, t, **opts)[0]


def X(t):
    if t == 0:
        return 0.0
    Rt = R(t)
    return kappa * quad(lambda tau: I(tau) * (Rt - R(tau)) ** 2, 0, t, **opts)[0]


def N(t):
    return quad(lambda tau: I(tau) * math.exp(-X(tau)), 0, t, epsabs=0, epsrel=1e-10, limit=200)[0]


times = [300.0, 600.0, 900.0, 1200.0]
out = {
    "description": __doc__,
    "made_with": "Debian python3-scipy %s, numpy %s: /usr/bin/python3 kinetics/testdata/ramp_reference.py" % (scipy.__version__, numpy.__version__),
    "params": {"En_eV": En, "I0": I0, "a": a, "b": b, "Eg_eV": Eg, "G0_m_s": G0, "p0_Pa": p0, "shape": "round"},
    "ramp": {"T0_K": T0, "T1_K": T1, "duration_s": D, "pCH4_Pa": pC, "pH2_Pa": 0.0},
    "samples": [],
}
for t in times:
    x = X(t)
    out["samples"].append({"t_s": t, "coverage": -math.expm1(-x), "extended": x, "nuclei_per_m2": N(t), "radius_m": R(t)})
for level in (0.5, 0.9, 0.99):
    y = -math.log(1 - level)
    out["t%d_s" % round(level * 100)] = brentq(lambda t: X(t) - y, 1.0, D, xtol=1e-9, rtol=1e-14)
print(json.dumps(out, indent=2))
