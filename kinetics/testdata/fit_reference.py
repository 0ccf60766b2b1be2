#!/usr/bin/python3
"""Reference fit for kinetics.TestFitAgainstScipy.

Reads fit_data.json (synthetic isothermal runs written by the Go test with
FOILRUN_WRITE_FIT_DATA=1) and fits the same model with
scipy.optimize.least_squares, independently of the Go code:

  u  = 1/(k T),  k = 1.380649e-23 / 1.602176634e-19 eV/K (SI 2019, exact)
  I  = exp(lnI0 - En u + a ln(pC/p0) - b ln(max(pH, 0.01)/p0))
  G  = exp(lnG0 - Eg u + ln((pC - pCeq)/p0) - 0.5 ln(max(pH, 0.01)/p0))
  X  = kappa I G^2 t^3 / 3                      (JMAK, constant conditions)
  N  = I c^(-1/3) Gamma(4/3) P(1/3, X),  c = kappa I G^2 / 3
       (closed form of  I * integral_0^t exp(-c tau^3) dtau; P is the
        regularised lower incomplete gamma function, scipy.special.gammainc)

kappa = pi (round domains), p0 = 100 Pa. Residuals, as in kinetics.Fit:

  coverage: (ln(-ln(1 - clip(theta_m))) - ln(clip(X))) / sigma
  density:  (ln N_m - ln N) / sigma

with theta clipped to [eps, 1 - eps] (X to [-ln(1-eps), -ln eps]),
eps = 1e-3, sigma = 0.1 on both. Start: En -1, ln 10, a 2, b 1.5, Eg 4,
ln 5e9 (fitStart in fit_test.go). Standard errors from the Jacobian at the
solution: s^2 (J^T J)^-1, s^2 = RSS/(n - p).

Run (Debian python3-scipy 1.10.1, numpy 1.24.2):
  cd kinetics/testdata && /usr/bin/python3 fit_reference.py > fit_reference.json
"""
import json
import math

import numpy as np
import scipy
from scipy.optimize import least_squares
from scipy.special import gammainc

K_B = 1.380649e-23 / 1.602176634e-19
KAPPA = math.pi
P0 = 100.0
EPS = 1e-3
SIGMA = 0.1
FLOOR = 0.01
NAMES = ["En", "I0", "a", "b", "Eg", "G0"]

runs = json.load(open("fit_data.json"))
T = np.array([r["T_K"] for r in runs])
pC = np.array([r["pC_Pa"] for r in runs])
pH = np.array([r["pH_Pa"] for r in runs])
pCeq = np.array([r["pCeq_Pa"] for r in runs])
t = np.array([r["t_s"] for r in runs])
theta_m = np.array([r["coverage"] for r in runs])
N_m = np.array([r["nuclei_density_m2"] for r in runs])

xlo, xhi = -math.log1p(-EPS), -math.log(EPS)
cl_m = np.log(np.clip(-np.log1p(-np.minimum(theta_m, 1 - EPS)), xlo, xhi))
u = 1 / (K_B * T)
lph = np.log(np.maximum(pH, FLOOR) / P0)


def residuals(v):
    En, lnI0, a, b, Eg, lnG0 = v
    lnI = lnI0 - En * u + a * np.log(pC / P0) - b * lph
    lnG = lnG0 - Eg * u + np.log((pC - pCeq) / P0) - 0.5 * lph
    I, G = np.exp(lnI), np.exp(lnG)
    c = KAPPA * I * G**2 / 3
    X = c * t**3
    N = I * c ** (-1 / 3) * math.gamma(4 / 3) * gammainc(1 / 3, X)
    rc = (cl_m - np.log(np.clip(X, xlo, xhi))) / SIGMA
    rn = (np.log(N_m) - np.log(np.maximum(N, 1))) / SIGMA
    return np.concatenate([rc, rn])


x0 = np.array([-1.0, math.log(10), 2.0, 1.5, 4.0, math.log(5e9)])
sol = least_squares(residuals, x0, method="trf", x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000)
J = sol.jac
n, p = J.shape
s2 = 2 * sol.cost / (n - p)
cov = s2 * np.linalg.inv(J.T @ J)
se = np.sqrt(np.diag(cov))
out = {
    "scipy": scipy.__version__,
    "method": "scipy.optimize.least_squares(method='trf', x_scale='jac'), closed-form isothermal JMAK",
    "status": int(sol.status),
    "sigma": SIGMA,
    "epsilon": EPS,
    "rss": 2 * sol.cost,
    "estimates": {k: float(x) for k, x in zip(NAMES, sol.x)},
    "se": {k: float(x) for k, x in zip(NAMES, se)},
    "note": "I0 and G0 are natural logarithms of their SI values (/m2/s, m/s)",
}
print(json.dumps(out, indent=1))
