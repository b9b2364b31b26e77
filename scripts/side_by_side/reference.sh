#!/usr/bin/env bash
# Make the SciPy references that tests/side_by_side_reference.rs reads: the generated side-by-side
# networks (gen_network.py, translated by to_toml.py with the peer's own lamp grid) and the final
# states of the SciPy peer (scipy_peer.py: solve_ivp BDF, analytic sparse Jacobian) at rtol 1e-10.
# Needs a Python with numpy and scipy (PYTHON, default python3); only to regenerate: the tests read
# the files this writes.
#
# usage: scripts/side_by_side/reference.sh [N_SPECIES:N_THERMAL:N_PHOTO:SEED ...]
#   default: 50:250:5:7 50:250:5:11 (the side-by-side sizes' smallest, both seeds)
set -euo pipefail
HERE="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
OUT="$HERE/../../tests/data/side_by_side"
PYTHON="${PYTHON:-python3}"
mkdir -p "$OUT"
cases=("$@")
[ ${#cases[@]} -gt 0 ] || cases=(50:250:5:7 50:250:5:11)
for c in "${cases[@]}"; do
  IFS=: read -r ns nt np seed <<< "$c"
  tag="n$ns-s$seed"
  tmp="$(mktemp)"
  "$PYTHON" "$HERE/gen_network.py" "$ns" "$nt" "$np" "$seed" > "$tmp"
  "$PYTHON" "$HERE/to_toml.py" "$tmp" "$OUT/$tag.toml" --light lamp
  "$PYTHON" "$HERE/scipy_peer.py" "$tmp" 3600 1e-10 1e-20 BDF | "$PYTHON" -c '
import json, sys
d = json.loads(sys.stdin.read())
assert d["ok"], d
print("# SciPy solve_ivp BDF (scipy_peer.py), rtol 1e-10, atol 1e-20, t = 3600 s: final concentrations")
print("species,concentration (M)")
for name, c in d["final"].items():
    print(f"{name},{c!r}")
' > "$OUT/scipy_final_$tag.csv"
  rm -f "$tmp"
  echo "wrote $OUT/$tag.toml and scipy_final_$tag.csv"
done
