#!/usr/bin/python3
"""Reference values of P(1/3, x) = scipy.special.gammainc(1/3, x) for
kinetics.TestGammaIncThird.

  /usr/bin/python3 gammainc_third.py   (Debian python3-scipy 1.10.1)

Prints x and P with repr (every digit of the float64).
"""
from scipy.special import gammainc

for x in [1e-300, 1e-12, 1e-6, 1e-3, 0.1, 0.5, 1.0, 4 / 3 - 1e-9, 4 / 3, 4 / 3 + 1e-9, 2.0, 3.5,
          6.907755278982137, 10.0, 30.0, 36.9, 37.0, 100.0, 1e4]:
    print(repr(x), repr(float(gammainc(1 / 3, x))))
