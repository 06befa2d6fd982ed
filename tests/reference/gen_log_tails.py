#!/usr/bin/env python3
"""log10 of far-tail p values, where double precision underflows.

Re-runnable: `python3 tests/reference/gen_log_tails.py` rewrites
tests/reference/log_tails.json. mpmath (60 significant digits) computes
ln P(T >= t) for Student's t as ln(1/2 * betainc(df/2, 1/2, 0, df/(df+t^2),
regularized=True)) and ln P(Z >= z) for the normal as ln(erfc(z/sqrt 2)/2).
"""
import json
import os

import mpmath

mpmath.mp.dps = 60
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "log_tails.json")


def t_case(t, df):
    t, df = mpmath.mpf(t), mpmath.mpf(df)
    x = df / (df + t * t)
    v = mpmath.log(mpmath.betainc(df / 2, mpmath.mpf(1) / 2, 0, x, regularized=True) / 2)
    return {"t": float(t), "df": float(df), "ln_sf": float(v)}


def z_case(z):
    z = mpmath.mpf(z)
    return {"z": float(z), "ln_sf": float(mpmath.log(mpmath.erfc(z / mpmath.sqrt(2)) / 2))}


doc = {
    "mpmath_version": mpmath.__version__,
    "t": [t_case(t, df) for t, df in [
        (1e3, 2), (1e6, 3), (1e40, 10), (1e80, 10), (1e200, 5), (50, 200), (200, 60),
        (1e5, 30.5), (12.0, 4), (3.0, 7)]],
    "normal": [z_case(z) for z in [5, 20, 29.9, 30.1, 37, 40, 100, 1e3, 1e5]],
}
with open(OUT, "w") as f:
    json.dump(doc, f, indent=1)
    f.write("\n")
print(f"wrote {OUT}")
