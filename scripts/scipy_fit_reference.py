#!/usr/bin/env python3
"""Independent SciPy fit of the demo data (demo-data/fit/) to networks/photoswitch.toml.

What it does
------------
Uses the SciPy re-implementation of the photoswitch kinetics in scripts/scipy_reference.py
(Gaussian LED bands, Beer-Lambert shares, Eyring thermal step; no photoledger code), applies
each experiment's overrides from demo-data/fit/experiments.toml, and fits the two free
parameters photoledger fits by default -- the E -> Z quantum yield and the Eyring barrier of
the thermal Z -> E step -- with scipy.optimize.least_squares (trust-region reflective, tight
tolerances) to the sd-weighted residuals of the time courses and the Z/E ratio end point.
Standard errors both ways, from (J^T J)^-1 at the optimum: scaled by the reduced chi-square
(sigma estimated from the scatter; curve_fit's absolute_sigma=False) and unscaled (the sd taken
as known; curve_fit's absolute_sigma=True). It writes the values, both standard errors and
chi-square as CSV on standard output;
tests/fit_references.rs compares photoledger's fit with that file and never runs Python.

How to run
----------
    pip install numpy scipy
    python3 scripts/scipy_fit_reference.py > tests/data/scipy_fit_photoswitch.csv
"""

import csv
import math
import pathlib
import sys
import tomllib

import numpy as np
import scipy
from scipy.integrate import solve_ivp
from scipy.optimize import least_squares

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
import scipy_reference as ref  # noqa: E402

ref.UNITS.update({"µW": 1e-6, "uW": 1e-6, "min": 60.0, "s": 1.0, "h": 3600.0})
ROOT = pathlib.Path(__file__).resolve().parent.parent
NAMES = ["E-azo", "Z-azo"]


def model(net, sets, phi_ez, barrier):
    """Right-hand side and initial state of the photoswitch with overrides `sets`."""
    cond = net["conditions"]
    temperature = ref.quantity(cond["temperature"])
    volume = ref.quantity(cond["volume"])
    path = ref.quantity(cond["path_length"])
    background = float(cond["background"])
    wl, q = [], []
    for light in net["light"]:
        power = sets.get(f"light.{light['name']}.power", light["power"])
        x, f = ref.band_bins(ref.quantity(light["centre"]), ref.quantity(light["fwhm"]), ref.quantity(power))
        wl.append(x)
        q.append(f)
    wl = np.concatenate(wl)
    q = np.concatenate(q)
    species = {s["name"]: s for s in net["species"]}
    y0 = np.array([ref.quantity(sets.get(f"species.{n}.initial", species[n].get("initial", "0 M"))) for n in NAMES])
    eps = np.array([np.interp(wl, *ref.table(species[n]["epsilon"], 100.0), left=0.0, right=0.0) for n in NAMES])
    photo = []
    for p in net["photo"]:
        a, b = [s.strip() for s in p["equation"].split("->")]
        qy = p["quantum_yield"]
        if p["name"] == "E to Z":
            phi = np.full(wl.shape, phi_ez)
        elif isinstance(qy, dict):
            phi = np.interp(wl, *ref.table(qy, 1.0))
        else:
            phi = np.full(wl.shape, float(qy))
        photo.append((NAMES.index(a), NAMES.index(b), phi))
    k = ref.KB * temperature / ref.H * math.exp(-barrier / (ref.R * temperature))

    def rhs(_t, c):
        a_sp = path * eps * c[:, None]
        a_tot = a_sp.sum(axis=0) + background
        w = q * -np.expm1(-a_tot * math.log(10.0)) * a_sp / a_tot
        d = np.zeros(2)
        for i, j, phi in photo:
            r = (w[i] * phi).sum() / volume
            d[i] -= r
            d[j] += r
        d[1] -= k * c[1]
        d[0] += k * c[1]
        return d

    return rhs, y0


def read_points(path):
    rows = [r for r in csv.reader(l for l in path.read_text(encoding="utf-8").splitlines() if l and not l.startswith("#"))]
    head = [c.strip() for c in rows[0]]
    tf = ref.UNITS[head[0][head[0].index("(") + 1 : -1]]
    vf = ref.UNITS[head[2][head[2].index("(") + 1 : -1]]
    return [(float(r[0]) * tf, r[1].strip(), float(r[2]) * vf, float(r[3]) * vf) for r in rows[1:]]


def main():
    net = tomllib.loads((ROOT / "networks" / "photoswitch.toml").read_text(encoding="utf-8"))
    exps = tomllib.loads((ROOT / "demo-data" / "fit" / "experiments.toml").read_text(encoding="utf-8"))["experiment"]
    data = []
    for e in exps:
        pts = read_points(ROOT / "demo-data" / "fit" / e["data"]) if "data" in e else []
        until = max([p[0] for p in pts] + [ref.quantity(e["until"]) if "until" in e else 0.0])
        data.append((e.get("set", {}), pts, e.get("endpoints", []), until))

    def residuals(p):
        phi, dg = p[0], p[1] * 1000.0
        out = []
        for sets, pts, ends, until in data:
            rhs, y0 = model(net, sets, phi, dg)
            times = sorted({t for t, *_ in pts} | {until})
            sol = solve_ivp(rhs, (0.0, until), y0, method="Radau", t_eval=times, rtol=1e-11, atol=1e-17)
            at = {t: sol.y[:, i] for i, t in enumerate(sol.t)}
            for t, s, v, sd in pts:
                out.append((v - at[t][NAMES.index(s)]) / sd)
            for ep in ends:
                end = at[until]
                f = end[NAMES.index(ep["species"])] / end[NAMES.index(ep["over"])]
                out.append((ep["value"] - f) / ep["sd"])
        return np.array(out)

    start = [float(net["photo"][0]["quantum_yield"]), ref.quantity(net["thermal"][0]["rate"]["barrier"]) / 1000.0]
    fit = least_squares(residuals, start, method="trf", x_scale=[0.01, 0.1], xtol=1e-14, ftol=1e-14, gtol=1e-14, diff_step=1e-7)
    r = fit.fun
    chi2 = float(r @ r)
    dof = len(r) - 2
    cov_absolute = np.linalg.inv(fit.jac.T @ fit.jac)
    se_absolute = np.sqrt(np.diag(cov_absolute))
    se = np.sqrt(np.diag(cov_absolute * chi2 / dof))
    o = sys.stdout
    o.write("# SciPy fit of demo-data/fit/ to networks/photoswitch.toml, written by scripts/scipy_fit_reference.py\n")
    o.write(f"# scipy {scipy.__version__}, numpy {np.__version__}: least_squares trf, solve_ivp Radau rtol 1e-11\n")
    o.write("parameter,value,standard error scaled by reduced chi2,standard error with sd known,unit\n")
    o.write(f"photo.E to Z.quantum_yield,{float(fit.x[0])!r},{float(se[0])!r},{float(se_absolute[0])!r},\n")
    o.write(
        f"thermal.thermal Z to E.barrier,{float(fit.x[1]) * 1000.0!r},{float(se[1]) * 1000.0!r},"
        f"{float(se_absolute[1]) * 1000.0!r},J/mol\n"
    )
    o.write(f"chi2,{chi2!r},,,\n")


if __name__ == "__main__":
    main()
