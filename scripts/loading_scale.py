#!/usr/bin/env python3
"""Loading at scale: time `photoledger check` on generated (invented) inputs of three sizes each
and print the growth from one size to the next (linear loading: about 10x per 10x).

  python3 scripts/loading_scale.py [path/to/photoledger]   (default: target/release/photoledger)

Inputs: a spectrum CSV of 10,000 / 100,000 / 1,000,000 rows under one absorber, and a chain of
10,000 / 30,000 / 100,000 species joined by first-order steps. A benchmark, not a test.
"""
import math, os, subprocess, sys, tempfile, time

BIN = sys.argv[1] if len(sys.argv) > 1 else "target/release/photoledger"
HEAD = """# invented scaling input
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "320 nm"
power = "10 mW"
"""


def spectrum(d, n):
    with open(os.path.join(d, f"eps{n}.csv"), "w") as f:
        f.write("wavelength (nm), epsilon (L/(mol cm))\n")
        for i in range(n):
            wl = 250 + 200 * i / (n - 1)
            f.write(f"{wl:.7f},{8000 * math.exp(-((wl - 320) / 30) ** 2):.6g}\n")
    p = os.path.join(d, f"spec{n}.toml")
    with open(p, "w") as f:
        f.write(HEAD + f'[[species]]\nname = "A"\ninitial = "50 uM"\nepsilon = {{ file = "eps{n}.csv" }}\n'
                '[[species]]\nname = "B"\nproduct = true\n[[photo]]\nequation = "A -> B"\nquantum_yield = 0.3\n')
    return p


def chain(d, n):
    p = os.path.join(d, f"chain{n}.toml")
    with open(p, "w") as f:
        f.write(HEAD + '[[species]]\nname = "S0"\ninitial = "50 uM"\nepsilon = { at = "320 nm", value = "5000 L/(mol cm)" }\n')
        for i in range(1, n):
            f.write(f'[[species]]\nname = "S{i}"\n')
        f.write('[[photo]]\nequation = "S0 -> S1"\nquantum_yield = 0.3\n')
        for i in range(1, n - 1):
            f.write(f'[[thermal]]\nequation = "S{i} -> S{i + 1}"\nrate = {{ k = "1 /s" }}\n')
    return p


def timed(path):
    best = math.inf
    for _ in range(3):
        t = time.perf_counter()
        r = subprocess.run([BIN, "check", "--quiet", path], capture_output=True)
        best = min(best, time.perf_counter() - t)
        if r.returncode not in (0, 1):
            sys.exit(f"{path}: exit {r.returncode}\n{r.stderr.decode()[:500]}")
    return best


with tempfile.TemporaryDirectory() as d:
    for label, make, sizes in [("spectrum rows", spectrum, [10_000, 100_000, 1_000_000]),
                               ("chained species", chain, [10_000, 30_000, 100_000])]:
        prev = None
        for n in sizes:
            s = timed(make(d, n))
            growth = "" if prev is None else f"  x{s / prev[1]:.1f} for x{n / prev[0]:.0f} the size"
            print(f"{label:>16} {n:>9,}: {s:7.3f} s{growth}")
            prev = (n, s)
