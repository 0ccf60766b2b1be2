#!/usr/bin/python3
"""Timing reference for `foilrun fit` (issue 18): the same fit in scipy.

  python3 time_fit.py DATA.csv [REPEATS]   (REPEATS default 7, at least 5)

DATA.csv holds the observations `foilrun fit` fits by default, written by
`benchdata observations RUNLOG.db DATA.csv` (cmd/foilrun/internal/benchdata):
per run its closed-form inputs (kinetics.ClosedRun) and its measured
coverage and nuclei density. The model and residuals are those of
kinetics.Fit (kinetics/fit.go, fitter.go, prepared.go), written here
independently with numpy:

  ln I = lnI0 - En u + a ln_pc - b ln_ph
  ln G = lnG0 - Eg u + ln_dp - ln_ph/2
  X = kappa I G^2 t^3 / 3,  c = kappa I G^2 / 3
  N = I c^(-1/3) Gamma(4/3) P(1/3, X)     (P: scipy.special.gammainc)

  coverage:  (ln(-ln(1 - min(theta, 1-eps))) clipped - ln clip(X)) / sc
  density:   (ln N_m - ln max(N, 1)) / sd

with X clipped to [-ln(1-eps), -ln eps], eps = 1e-3. The Jacobian is
analytic: d ln X = d ln I + 2 d ln G inside the clip (0 outside);
d ln N = (2/3 + D) d ln I + (-2/3 + 2D) d ln G with
D = X^(1/3) e^(-X) / (Gamma(1/3) P(1/3, X)) (0 where N <= 1).

As in kinetics.Fit: six free parameters (En, ln I0, a, b, Eg, ln G0) in
the coordinates of fitcoords.go (prefactors referred to the median growth
temperature, which does not move the optimum), a start from the linear
least-squares fit of the cloglog coverages and the linearised densities,
then two stages: unweighted (sc = sd = 1), then each metric's sigma set to
the RMS of its first-stage residuals. The minimiser is
scipy.optimize.least_squares(method="lm") (MINPACK's Levenberg-Marquardt)
with x_scale="jac" and ftol = xtol = gtol = 1e-10 (kinetics.Fit stops when
the cost changes by less than 1e-10 relative).

Prints one line: seconds_min seconds_median nfev (the whole fit, start and
both stages, timed REPEATS times; nfev counts residual evaluations of both
stages), and on stderr the estimates (En, I0, a, b, Eg, G0 in eV, /m2/s,
-, -, eV, m/s), for the agreement check against `foilrun fit --output json`.

Debian's python3-scipy (1.10.1, numpy 1.24.2) on /usr/bin/python3.
"""
import csv
import math
import sys
import time

import numpy as np
from scipy.optimize import least_squares
from scipy.special import gammainc

K_B = 1.380649e-23 / 1.602176634e-19  # eV/K, SI 2019 (exact)
EPS = 1e-3
XLO, XHI = -math.log1p(-EPS), -math.log(EPS)
G43 = math.gamma(4 / 3)
G13 = math.gamma(1 / 3)


def load(path):
    rows = list(csv.DictReader(open(path)))
    col = {k: np.array([float(r[k]) for r in rows]) for k in
           ("u_per_eV", "ln_pc", "ln_ph", "ln_dp", "t_s", "kappa", "coverage", "nuclei_density_m2")}
    if any(r["etch"] == "true" for r in rows):
        sys.exit("time_fit.py: the data hold an etching run; this reference fits growing runs only")
    return col


class Problem:
    def __init__(self, d):
        self.u, self.lpc, self.lph, self.ldp = d["u_per_eV"], d["ln_pc"], d["ln_ph"], d["ln_dp"]
        self.t, self.kappa = d["t_s"], d["kappa"]
        theta = d["coverage"]
        self.cl_m = np.log(np.clip(-np.log1p(-np.minimum(theta, 1 - EPS)), XLO, XHI))
        self.lnN_m = np.log(d["nuclei_density_m2"])
        self.lk = np.log(self.kappa / 3)
        u_ref = float(np.median(self.u))  # the median of 1/kT: the median growth temperature
        # v = B x + b0: x = (En, ln I_ref, a, b, Eg, ln G_ref), ln I_ref = ln I0 - En u_ref.
        self.B = np.eye(6)
        self.B[1, 0] = u_ref
        self.B[5, 4] = u_ref
        n = len(self.u)
        one = np.ones(n)
        # d ln I / dv and d ln G / dv, rows per run, v = (En, lnI0, a, b, Eg, lnG0)
        self.gI = np.column_stack([-self.u, one, self.lpc, -self.lph, 0 * one, 0 * one]) @ self.B
        self.gG = np.column_stack([0 * one, 0 * one, 0 * one, 0 * one, -self.u, one]) @ self.B
        self.nfev = 0

    def model(self, x):
        lnI = self.gI @ x
        lnG = self.gG @ x + self.ldp - 0.5 * self.lph
        lnX = self.lk + lnI + 2 * lnG + 3 * np.log(self.t)
        X = np.exp(lnX)
        P = gammainc(1 / 3, X)
        lnN = lnI - (lnX - 3 * np.log(self.t)) / 3 + math.log(G43) + np.log(P)
        return X, P, lnX, lnN

    def residuals(self, x, sc, sd):
        self.nfev += 1
        X, _, _, lnN = self.model(x)
        rc = (self.cl_m - np.log(np.clip(X, XLO, XHI))) / sc
        rn = (self.lnN_m - np.maximum(lnN, 0)) / sd
        return np.concatenate([rc, rn])

    def jacobian(self, x, sc, sd):
        X, P, lnX, lnN = self.model(x)
        inside = ((X > XLO) & (X < XHI)).astype(float)[:, None]
        Jc = -inside * (self.gI + 2 * self.gG) / sc
        D = np.exp(lnX / 3 - X) / (G13 * P)
        live = (lnN > 0).astype(float)[:, None]
        Jn = -live * ((2 / 3 + D)[:, None] * self.gI + (-2 / 3 + 2 * D)[:, None] * self.gG) / sd
        return np.vstack([Jc, Jn])

    def linear_start(self):
        """Linear least squares of cloglog coverage (inside the clip) and
        of the linearised ln N at the measured X, unweighted."""
        c0 = self.lk + self.ldp * 2 - self.lph + 3 * np.log(self.t)
        Xm = np.exp(self.cl_m)
        use = (Xm > XLO * (1 + 1e-12)) & (Xm < XHI * (1 - 1e-12))  # eps < theta < 1 - eps
        A1, y1 = (self.gI + 2 * self.gG)[use], (self.cl_m - c0)[use]
        alpha0 = 2 / 3 * (self.ldp - 0.5 * self.lph) * -1 - self.lk / 3 + math.log(G43) + np.log(gammainc(1 / 3, Xm))
        A2 = 2 / 3 * self.gI - 2 / 3 * self.gG
        y2 = self.lnN_m - alpha0
        A, y = np.vstack([A1, A2]), np.concatenate([y1, y2])
        return np.linalg.lstsq(A, y, rcond=None)[0]

    def fit(self):
        self.nfev = 0
        x = self.linear_start()
        opts = dict(method="lm", x_scale="jac", ftol=1e-10, xtol=1e-10, gtol=1e-10)
        s1 = least_squares(self.residuals, x, jac=self.jacobian, args=(1.0, 1.0), **opts)
        r = s1.fun
        n = len(self.u)
        sc = max(math.sqrt(np.mean(r[:n] ** 2)), 1e-6)
        sd = max(math.sqrt(np.mean(r[n:] ** 2)), 1e-6)
        s2 = least_squares(self.residuals, s1.x, jac=self.jacobian, args=(sc, sd), **opts)
        return self.B @ s2.x, self.nfev, s2


def main():
    if len(sys.argv) not in (2, 3):
        sys.exit("usage: time_fit.py DATA.csv [REPEATS]")
    repeats = max(int(sys.argv[2]) if len(sys.argv) == 3 else 7, 5)
    p = Problem(load(sys.argv[1]))
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        v, nfev, sol = p.fit()
        times.append(time.perf_counter() - t0)
    times.sort()
    print(f"{times[0]:.6f} {times[len(times) // 2]:.6f} {nfev}")
    names = ["En", "I0", "a", "b", "Eg", "G0"]
    vals = [v[0], math.exp(v[1]), v[2], v[3], v[4], math.exp(v[5])]
    print(" ".join(f"{k}={x:.10g}" for k, x in zip(names, vals)), f"status={sol.status}", file=sys.stderr)


if __name__ == "__main__":
    main()
