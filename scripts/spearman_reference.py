"""Reference value of Spearman's rank correlation for tests/uncertainty_references.rs.

An independent computation with SciPy (scipy.stats.spearmanr, ties given average ranks) on a
small data set with ties. Needs `pip install scipy`; only to regenerate the committed file
tests/data/spearman_scipy.json: the Rust test reads that file and does not need Python.
"""
import json

import scipy
from scipy.stats import spearmanr

# Twelve invented pairs, with ties in both columns.
x = [2.0, 3.5, 3.5, 1.0, 7.2, 5.5, 4.1, 4.1, 4.1, 9.0, 0.5, 6.3]
y = [1.1, 2.0, 1.7, 0.9, 3.0, 3.3, 2.0, 2.6, 1.2, 2.9, 1.4, 2.0]
rho = spearmanr(x, y).statistic

with open("tests/data/spearman_scipy.json", "w") as f:
    json.dump({"scipy": scipy.__version__, "x": x, "y": y, "rho": float(rho)}, f, indent=1)
    f.write("\n")
print(repr(float(rho)))
