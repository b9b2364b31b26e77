#!/usr/bin/env python3
"""A short, deterministic mutation pass over the bundled networks (Python standard library only).

Each case takes a bundled network, applies a few mutations drawn from a fixed seed (a number
made extreme, zero, negative, NaN or infinite; a unit changed; a line dropped, doubled or cut
short; stray bytes; a long name) and runs `check`, `simulate`, `ledger`, `diagram`, `barrier`
(the network's verdicts) and `uncertainty` (a few samples) on it, each with a time limit and a
memory limit. A case fails on a panic (exit 101), an exit code outside the
documented table (README, "Exit codes": 0-6), death by a signal, a run over the time limit (a
hang), or a NaN or infinite number in any CSV or JSON the commands wrote or printed.

    python3 scripts/fuzz_inputs.py BINARY [--budget SECONDS] [--cases N] [--seed S] [--jobs J]

The cases are the same on every machine (the seed fixes them); the budget only decides how many
of them run. Failing inputs are kept in a folder the script names; it exits 1 when any case
failed, 0 otherwise.
"""

import argparse
import json
import math
import os
import random
import re
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
ALLOWED_EXITS = {0, 1, 2, 3, 4, 5, 6}
# Per command: a time limit (a run over it counts as a hang) and an address-space limit.
TIME_LIMIT_S = 60
MEMORY_LIMIT_BYTES = 2 * 1024**3

NUMBER = re.compile(r"(?<![A-Za-z_\-.])-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?(?![A-Za-z_\d])")
EXTREMES = ["0", "-1", "1e308", "1e-308", "5e-324", "1e18", "-1e10", "nan", "inf", "1e-300",
            "1e300", "99999999999999999999", "0.0", "1e6", "-0"]
UNITS = ["K", "nm", "mW", "W", "M", "mM", "µM", "mL", "L", "cm", "m", "s", "h", "kcal/mol",
         "kJ/mol", "L/(mol cm)", "einstein/s", "furlong", ""]


def mutate(text, rng):
    """One mutation of the network text."""
    kind = rng.randrange(9)
    lines = text.split("\n")
    if kind <= 2:  # a number made extreme (most useful, so most often)
        spots = list(NUMBER.finditer(text))
        if spots:
            m = rng.choice(spots)
            return text[: m.start()] + rng.choice(EXTREMES) + text[m.end():]
    if kind == 3:  # a unit changed inside a quoted quantity
        spots = list(re.finditer(r'"(-?[\d.eE+-]+) ([^"]+)"', text))
        if spots:
            m = rng.choice(spots)
            return text[: m.start(2)] + rng.choice(UNITS) + text[m.end(2):]
    if kind == 4 and len(lines) > 1:  # a line dropped
        del lines[rng.randrange(len(lines))]
        return "\n".join(lines)
    if kind == 5 and lines:  # a line doubled
        i = rng.randrange(len(lines))
        lines.insert(i, lines[i])
        return "\n".join(lines)
    if kind == 6 and text:  # cut short
        return text[: rng.randrange(len(text))]
    if kind == 7:  # stray bytes
        i = rng.randrange(len(text) + 1)
        junk = "".join(chr(rng.choice([0x22, 0x5B, 0x5D, 0x3D, 0x23, 0x0A, 0xFEFF, 0x7B, 0x2C])) for _ in range(3))
        return text[:i] + junk + text[i:]
    # a long name
    spots = list(re.finditer(r'name = "([^"]*)"', text))
    if spots:
        m = rng.choice(spots)
        return text[: m.start(1)] + "x" * rng.choice([150, 250, 5000]) + text[m.end(1):]
    return text


def limits():
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT_BYTES, MEMORY_LIMIT_BYTES))


def non_finite_in_csv(path):
    with open(path, encoding="utf-8", errors="replace") as f:
        for n, line in enumerate(f):
            if n == 0 or line.startswith("#"):
                continue
            for cell in line.strip().split(","):
                try:
                    v = float(cell)
                except ValueError:
                    continue
                if not math.isfinite(v):
                    return f"{os.path.basename(path)} line {n + 1}: {cell}"
    return None


def non_finite_in_json(value):
    if isinstance(value, float):
        return not math.isfinite(value)
    if isinstance(value, dict):
        return any(non_finite_in_json(v) for v in value.values())
    if isinstance(value, list):
        return any(non_finite_in_json(v) for v in value)
    return False


def run_case(binary, index, name, text, keep):
    """Run every command on one mutant; a list of problems (empty when sound)."""
    work = tempfile.mkdtemp(prefix=f"fuzz-{index}-")
    problems = []
    try:
        for sub in ("demo-data",):
            src = os.path.join(ROOT, sub)
            if os.path.isdir(src):
                os.symlink(src, os.path.join(work, sub))
        with open(os.path.join(work, "net.toml"), "w", encoding="utf-8") as f:
            f.write(text)
        commands = [
            ["check", "net.toml"],
            ["simulate", "net.toml", "--until", "1 h", "--points", "50", "--out", "sim"],
            ["ledger", "net.toml", "--out", "led"],
            ["simulate", "net.toml", "--until", "1 h", "--points", "20", "--json", "--out", "simj"],
            ["diagram", "net.toml", "--out", "net.svg"],
            ["barrier", "net.toml", "--window", "1 h"],
            ["uncertainty", "net.toml", "--samples", "3", "--until", "1 h", "--out", "unc"],
        ]
        for args in commands:
            start = time.monotonic()
            try:
                out = subprocess.run([binary] + args, cwd=work, capture_output=True,
                                     timeout=TIME_LIMIT_S, preexec_fn=limits)
            except subprocess.TimeoutExpired:
                problems.append(f"{' '.join(args)}: no answer in {TIME_LIMIT_S} s (a hang)")
                continue
            code = out.returncode
            what = " ".join(args)
            if code < 0:
                problems.append(f"{what}: killed by signal {-code}")
            elif code == 101:
                problems.append(f"{what}: panic: {out.stderr.decode(errors='replace')[-300:]}")
            elif code not in ALLOWED_EXITS:
                problems.append(f"{what}: exit {code} is not in the table")
            if code == 0 and re.search(rb"(?<![\w.])(inf|NaN)(?![\w])", out.stdout):
                problems.append(f"{what}: printed an infinite or NaN number")
            if "--json" in args and code == 0:
                try:
                    if non_finite_in_json(json.loads(out.stdout)):
                        problems.append(f"{what}: NaN or infinite number in the printed JSON")
                except ValueError as e:
                    problems.append(f"{what}: printed JSON does not parse: {e}")
            if time.monotonic() - start > TIME_LIMIT_S:
                problems.append(f"{what}: over {TIME_LIMIT_S} s")
        for folder in ("sim", "led", "simj", "unc"):
            d = os.path.join(work, folder)
            if not os.path.isdir(d):
                continue
            for fname in sorted(os.listdir(d)):
                p = os.path.join(d, fname)
                if fname.endswith(".csv"):
                    bad = non_finite_in_csv(p)
                    if bad:
                        problems.append(f"{folder}/{bad}: not finite")
                elif fname.endswith(".json"):
                    with open(p, encoding="utf-8") as f:
                        try:
                            if non_finite_in_json(json.load(f)):
                                problems.append(f"{folder}/{fname}: NaN or infinite number")
                        except ValueError as e:
                            problems.append(f"{folder}/{fname}: does not parse: {e}")
        for entry in os.listdir(work):
            if entry.startswith(".") and (".partial-" in entry or entry.endswith(".tmp")):
                problems.append(f"left a temporary {entry}")
        if problems:
            kept = os.path.join(keep, f"case-{index}-{name}")
            with open(kept, "w", encoding="utf-8") as f:
                f.write(text)
            problems.append(f"input kept as {kept}")
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return problems


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("binary")
    ap.add_argument("--budget", type=float, default=120.0, help="seconds to spend starting cases")
    ap.add_argument("--cases", type=int, default=2000, help="most cases to run")
    ap.add_argument("--seed", type=int, default=17)
    ap.add_argument("--jobs", type=int, default=2)
    a = ap.parse_args()
    binary = os.path.abspath(a.binary)
    nets = sorted(f for f in os.listdir(os.path.join(ROOT, "networks")) if f.endswith(".toml"))
    texts = {}
    for n in nets:
        with open(os.path.join(ROOT, "networks", n), encoding="utf-8") as f:
            texts[n] = f.read()
    rng = random.Random(a.seed)
    cases = []
    for i in range(a.cases):
        name = nets[i % len(nets)]
        text = texts[name]
        for _ in range(rng.randint(1, 3)):
            text = mutate(text, rng)
        cases.append((i, name, text))
    keep = tempfile.mkdtemp(prefix="photoledger-fuzz-failures-")
    deadline = time.monotonic() + a.budget
    failures = []
    done = 0

    def one(case):
        if time.monotonic() > deadline:
            return None
        i, name, text = case
        return (i, name, run_case(binary, i, name, text, keep))

    with ThreadPoolExecutor(max_workers=a.jobs) as pool:
        for r in pool.map(one, cases):
            if r is None:
                continue
            done += 1
            i, name, problems = r
            if problems:
                failures.append((i, name, problems))
    print(f"fuzz: {done} mutated networks (seed {a.seed}) through check, simulate, ledger, diagram, barrier and uncertainty; "
          f"{len(failures)} failed")
    for i, name, problems in failures:
        print(f"  case {i} ({name}):")
        for p in problems:
            print(f"    {p}")
    if not failures:
        shutil.rmtree(keep, ignore_errors=True)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
