"""Reference values for test/stats/power.test.ts when python3 is missing: noncentral chi-square
quantiles (scipy.stats.ncx2.ppf) and the noncentrality at which a chi-square test reaches a power
(scipy.optimize.brentq on scipy.stats.ncx2.sf at scipy.stats.chi2.isf). Writes
test/fixtures/power/ncx2-power.json (or prints it with --stdout, as the test does live).
Run: python3 scripts/power_reference.py"""
import json
import os
from scipy.optimize import brentq
from scipy.stats import chi2, ncx2

QUANTILES = [[0.05, 1, 0.5], [0.5, 3, 2], [0.95, 4, 10], [0.999, 10, 50], [0.2, 2, 100], [0.01, 25, 5]]
POWERS = [[1, 0.05, 0.8], [3, 0.05, 0.8], [4, 0.0025, 0.9], [12, 0.01, 0.5], [1, 1e-6, 0.8]]

out = {
    "origin": "scipy.stats.ncx2.ppf; brentq on ncx2.sf at chi2.isf (scripts/power_reference.py)",
    "quantiles": [{"p": p, "df": d, "lambda": la, "x": float(ncx2.ppf(p, d, la))} for p, d, la in QUANTILES],
    "noncentrality": [
        {"df": d, "alpha": a, "power": pw, "lambda": float(brentq(lambda x: ncx2.sf(chi2.isf(a, d), d, x) - pw, 1e-9, 1e4, xtol=1e-14, rtol=1e-14))}
        for d, a, pw in POWERS
    ],
}
import sys

if "--stdout" in sys.argv:
    print(json.dumps(out))
    sys.exit(0)
here = os.path.dirname(os.path.abspath(__file__))
path = os.path.join(here, "..", "test", "fixtures", "power", "ncx2-power.json")
os.makedirs(os.path.dirname(path), exist_ok=True)
with open(path, "w") as f:
    json.dump(out, f, indent=1)
