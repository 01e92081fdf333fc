"""Reference data for --counts (test/cli/countsInput.test.ts).

Writes into the folder given as the first argument (default test/fixtures/counts):
- cells.csv: invented data given as one row per cell with a frequency column "n" (numpy seed
  20261204): text binary "sex", ordinal "edu" (1-3), nominal text "region", a continuous "score",
  a continuous "y" with a few empty cells, and counts 0-12 (every value of a row of count 0 also
  appears in a row with units, so both files have the same levels);
- expanded.csv: the same table with one row per unit, by pandas
  (DataFrame.loc[DataFrame.index.repeat(n)], the count column dropped).
Run: python3 scripts/counts_reference.py [folder]
"""
import os
import sys

import numpy as np
import pandas as pd

out = sys.argv[1] if len(sys.argv) > 1 else os.path.join("test", "fixtures", "counts")
os.makedirs(out, exist_ok=True)
rng = np.random.default_rng(20261204)
rows = 150
sex = rng.choice(["female", "male"], rows)
edu = rng.integers(1, 4, rows)
region = rng.choice(["north", "south", "east", "west"], rows)
score = np.round(rng.normal(50, 10, rows) + 3 * edu, 2)
y = np.round(0.05 * score + 0.5 * (sex == "male") + rng.normal(0, 1, rows), 3)
y_text = [repr(float(v)) for v in y]
for k in rng.choice(rows, 6, replace=False):
    y_text[k] = ""
n = rng.integers(0, 13, rows)
n[:3] = np.maximum(n[:3], 1)  # the first rows carry units, so that a later row of count 0 repeats their values
n[140] = 0
sex[140], edu[140], region[140], score[140], y_text[140] = sex[0], edu[0], region[0], score[0], y_text[0]
df = pd.DataFrame({"sex": sex, "edu": edu, "region": region, "score": [repr(float(v)) for v in score], "y": y_text, "n": n})
df.to_csv(os.path.join(out, "cells.csv"), index=False)
expanded = df.loc[df.index.repeat(df["n"])].drop(columns="n")
expanded.to_csv(os.path.join(out, "expanded.csv"), index=False)
print("wrote", out, "cells:", len(df), "units:", int(df["n"].sum()), "pandas", pd.__version__, "numpy", np.__version__)
