#!/usr/bin/env python3
"""Independent reference solution of networks/photoswitch.toml with SciPy.

What it does
------------
Re-implements, in Python and without any photoledger code, the kinetics of the bundled
photoswitch network (E-azo <-> Z-azo under two Gaussian LED bands, with a thermal Z -> E
step) and integrates it with scipy.integrate.solve_ivp (Radau, rtol 1e-10, atol 1e-16).
It writes the concentrations of E-azo and Z-azo at 22 output times over 2 h (t = 0, then
logarithmically spaced from 7.2 ms to 7200 s, the spacing photoledger's Options.log_time
uses with 20 outputs) as CSV on standard output. tests/photochemistry_references.rs
compares photoledger's BDF run against that file; the Rust test never runs Python.

How to run
----------
    pip install numpy scipy
    python3 scripts/scipy_reference.py > tests/data/scipy_photoswitch.csv

The numbers are read from networks/photoswitch.toml (Python 3.11+ tomllib); only the units
that file uses are understood, and anything else is an error.

The model, as the README states it
-----------------------------------
* Each LED band is a Gaussian in spectral power, sampled on a fine grid independent of
  photoledger's quadrature: 20001 equally spaced wavelengths over centre +/- 10 sigma
  (sigma = FWHM / sqrt(8 ln 2)); each sample takes half of each adjacent interval
  (trapezoid weights); the power of each bin becomes photons through the
  molar photon energy N_A h c / lambda; all bins are scaled so that the band carries the
  stated power.
* Molar absorption coefficients: tables interpolated linearly, zero outside the table.
  Quantum-yield tables: interpolated linearly, end values held outside.
  Background absorbance: the constant given.
* Well-stirred cell lit through one face: for each bin, A = l (eps_E [E] + eps_Z [Z]) + A_bg,
  the fraction 1 - 10^-A is absorbed, and species i takes the share l eps_i c_i / A of it.
* Thermal Z -> E: Eyring, k = k_B T / h * exp(-dG / (R T)) (transmission coefficient 1).
* Constants: CODATA 2018 exact values of h, c, N_A, k_B; R = N_A k_B; 1 kcal = 4184 J
  (thermochemical calorie).
"""

import math
import pathlib
import sys
import tomllib

import numpy as np
import scipy
from scipy.integrate import solve_ivp

# CODATA 2018 exact constants (2019 SI).
H = 6.62607015e-34  # J s
C = 299792458.0  # m/s
NA = 6.02214076e23  # 1/mol
KB = 1.380649e-23  # J/K
R = NA * KB  # J/(mol K)
CAL = 4.184  # J (thermochemical calorie)

# Only the units networks/photoswitch.toml uses, to SI-like internal units:
# wavelength m, power W, concentration mol/L, volume L, length m, energy J/mol.
UNITS = {
    "nm": 1e-9,
    "mW": 1e-3,
    "W": 1.0,
    "µM": 1e-6,
    "uM": 1e-6,
    "mM": 1e-3,
    "M": 1.0,
    "mL": 1e-3,
    "L": 1.0,
    "cm": 1e-2,
    "mm": 1e-3,
    "m": 1.0,
    "K": 1.0,
    "kcal/mol": 1000.0 * CAL,
    "kJ/mol": 1000.0,
}


def quantity(text):
    value, unit = text.split(" ", 1)
    if unit not in UNITS:
        raise SystemExit(f"unit {unit!r} not understood by this script")
    return float(value) * UNITS[unit]


def band_bins(centre, fwhm, power):
    """Photon bins (wavelength m, einstein/s) of a Gaussian band of total power `power` W."""
    sigma = fwhm / math.sqrt(8.0 * math.log(2.0))
    n = 20001
    half = 10.0 * sigma
    x = np.array([centre - half + 2.0 * half * i / (n - 1) for i in range(n)])
    shape = np.exp(-0.5 * ((x - centre) / sigma) ** 2)
    left = np.concatenate(([0.0], np.diff(x)))
    right = np.concatenate((np.diff(x), [0.0]))
    p = shape * 0.5 * (left + right)
    flux = p / (NA * H * C / x)
    return x, flux * (power / p.sum())


def table(spec, scale):
    """(wavelengths m, values) of a TOML table `spec` with values times `scale`."""
    if spec.get("wavelength_unit") != "nm":
        raise SystemExit("only tables in nm are understood")
    pts = np.array(spec["points"], dtype=float)
    return pts[:, 0] * 1e-9, pts[:, 1] * scale


def main():
    root = pathlib.Path(__file__).resolve().parent.parent
    net = tomllib.loads((root / "networks" / "photoswitch.toml").read_text(encoding="utf-8"))
    cond = net["conditions"]
    temperature = quantity(cond["temperature"])
    volume = quantity(cond["volume"])  # L
    path = quantity(cond["path_length"])  # m
    background = float(cond["background"])

    wl, q = [], []
    for light in net["light"]:
        if light["kind"] != "band":
            raise SystemExit("only band lights are understood")
        x, f = band_bins(quantity(light["centre"]), quantity(light["fwhm"]), quantity(light["power"]))
        wl.append(x)
        q.append(f)
    wl = np.concatenate(wl)
    q = np.concatenate(q)

    species = {s["name"]: s for s in net["species"]}
    names = ["E-azo", "Z-azo"]
    y0 = np.array([quantity(species[n].get("initial", "0 M")) for n in names])
    eps = []
    for n in names:
        spec = species[n]["epsilon"]
        if spec.get("unit") != "L/(mol cm)":
            raise SystemExit("only L/(mol cm) is understood for epsilon")
        x, v = table(spec, 100.0)  # L mol^-1 cm^-1 -> L mol^-1 m^-1
        eps.append(np.interp(wl, x, v, left=0.0, right=0.0))
    eps = np.array(eps)

    # Photochemical steps: (reactant index, product index, quantum yield per bin).
    photo = []
    for p in net["photo"]:
        a, b = [s.strip() for s in p["equation"].split("->")]
        qy = p["quantum_yield"]
        if isinstance(qy, dict):
            x, v = table(qy, 1.0)
            phi = np.interp(wl, x, v)  # end values held outside the table
        else:
            phi = np.full(wl.shape, float(qy))
        photo.append((names.index(a), names.index(b), phi))

    # Thermal steps (Eyring, first order).
    thermal = []
    for t in net["thermal"]:
        a, b = [s.strip() for s in t["equation"].split("->")]
        dg = quantity(t["rate"]["barrier"])
        k = KB * temperature / H * math.exp(-dg / (R * temperature))
        thermal.append((names.index(a), names.index(b), k))

    def rhs(_t, c):
        a_sp = path * eps * c[:, None]  # absorbance of each species per bin
        a_tot = a_sp.sum(axis=0) + background
        frac = -np.expm1(-a_tot * math.log(10.0))  # 1 - 10^-A
        w = q * frac * a_sp / a_tot  # einstein/s taken by each species per bin
        d = np.zeros(2)
        for i, j, phi in photo:
            r = (w[i] * phi).sum() / volume
            d[i] -= r
            d[j] += r
        for i, j, k in thermal:
            r = k * c[i]
            d[i] -= r
            d[j] += r
        return d

    until = 7200.0
    n = 20
    t0 = until * 1e-6
    times = [0.0] + [t0 * (until / t0) ** (i / n) for i in range(n + 1)]
    sol = solve_ivp(rhs, (0.0, until), y0, method="Radau", t_eval=times, rtol=1e-10, atol=1e-16)
    if not sol.success:
        raise SystemExit(sol.message)

    out = sys.stdout
    out.write("# Reference solution of networks/photoswitch.toml, written by scripts/scipy_reference.py\n")
    out.write(f"# scipy {scipy.__version__}, numpy {np.__version__}: solve_ivp Radau, rtol 1e-10, atol 1e-16\n")
    out.write("time (s),E-azo (mol/L),Z-azo (mol/L)\n")
    for t, e, z in zip(sol.t, sol.y[0], sol.y[1]):
        out.write(f"{float(t)!r},{float(e)!r},{float(z)!r}\n")


if __name__ == "__main__":
    main()
