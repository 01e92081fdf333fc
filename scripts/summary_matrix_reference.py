"""Reference matrices for the summary-statistics input (test/cli/summaryInput.test.ts).

Writes into the folder given as the first argument (default test/fixtures/summary):
- data.csv: invented cohort-shaped data (numpy, seed 20261203) with missing values in two columns,
  a binary column and an integer-coded ordinal column;
- corr.csv, cov.csv: pandas' Pearson correlation and Bessel-corrected covariance matrices of its
  complete cases (DataFrame.dropna().corr() / .cov()), square, 17 significant digits;
- corr-lower.csv: the same correlations as a lower triangle, each record ending at the diagonal;
- sd.csv: the complete cases' standard deviations (ddof=1), one "name,sd" line each;
- n.txt: the number of complete cases.
Run: python3 scripts/summary_matrix_reference.py [folder]
"""
import os
import sys

import numpy as np
import pandas as pd

out = sys.argv[1] if len(sys.argv) > 1 else os.path.join("test", "fixtures", "summary")
os.makedirs(out, exist_ok=True)
rng = np.random.default_rng(20261203)
n = 400
age = rng.normal(50, 10, n)
grade = np.clip(np.round(1 + (age - 50) / 8 + rng.normal(1.5, 0.9, n)), 1, 4).astype(int)
smoker = (rng.random(n) < 1 / (1 + np.exp(-(grade - 2.5)))).astype(int)
bmi = 25 + 0.08 * (age - 50) + rng.normal(0, 3, n)
sbp = 120 + 0.5 * (age - 50) + 0.9 * (bmi - 25) + rng.normal(0, 9, n)
chol = 5 + 0.4 * smoker + 0.02 * (sbp - 120) + 0.01 * (age - 50) + rng.normal(0, 0.6, n)
df = pd.DataFrame({"age": age, "grade": grade, "smoker": smoker, "bmi": bmi, "sbp": sbp, "chol": chol})
bmi_missing = rng.random(n) < 0.05
chol_missing = rng.random(n) < 0.05
df["bmi"] = df["bmi"].astype(object).where(~bmi_missing, "")
df["chol"] = df["chol"].astype(object).where(~chol_missing, "")
for col in ["age", "bmi", "sbp", "chol"]:
    df[col] = [("" if v == "" else repr(float(v))) for v in df[col]]
df.to_csv(os.path.join(out, "data.csv"), index=False)

complete = pd.read_csv(os.path.join(out, "data.csv")).dropna()
corr = complete.corr(method="pearson")
cov = complete.cov(ddof=1)
corr.to_csv(os.path.join(out, "corr.csv"), float_format="%.17g")
cov.to_csv(os.path.join(out, "cov.csv"), float_format="%.17g")
names = list(corr.columns)
with open(os.path.join(out, "corr-lower.csv"), "w") as f:
    f.write("," + ",".join(names) + "\n")
    for i, a in enumerate(names):
        f.write(a + "," + ",".join("%.17g" % corr.iloc[i, j] for j in range(i + 1)) + "\n")
with open(os.path.join(out, "sd.csv"), "w") as f:
    f.write("variable,sd\n")
    for a in names:
        f.write("%s,%.17g\n" % (a, complete[a].std(ddof=1)))
with open(os.path.join(out, "n.txt"), "w") as f:
    f.write("%d\n" % len(complete))
print("wrote", out, "complete cases:", len(complete), "pandas", pd.__version__, "numpy", np.__version__)
