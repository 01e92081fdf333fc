"""Reference data and values for pooled site audits (test/cli/sitePooling.test.ts).

Writes into the folder given as the first argument:
- lin-A.csv, lin-B.csv, lin-C.csv: invented continuous sites (a, b, c, d) with a nominal g and
  site-specific means, about 5% of c missing; lin-stacked.csv: the three stacked with a site column;
- cat-A.csv, cat-B.csv, cat-C.csv and cat-stacked.csv: invented categorical sites (u, w, z binary, v ordinal 1..3);
- reference.json: one linear and one categorical claim computed directly on the stacked rows with
  site added to the conditioning set:
  * linear b _||_ d | a, c, g, site: residuals of b and d on an intercept, a, c, g's level
    indicators and the site indicators (numpy.linalg.lstsq) over the complete cases, their
    correlation r, t = r * sqrt(df / (1 - r^2)) on df = n - 2 - (columns of S and site), and the
    two-sided p from scipy.stats.t.sf;
  * categorical u _||_ w | v, z, site: G^2 summed over the strata of (v, z, site) by
    scipy.stats.chi2_contingency(lambda_="log-likelihood", correction=False), its df, and p from
    scipy.stats.chi2.sf.
The data are invented (numpy.random.default_rng(20261203)).
"""
import json
import sys

import numpy as np
import pandas as pd
from scipy import stats

out = sys.argv[1]
rng = np.random.default_rng(20261203)

# linear sites
sizes = {"A": 400, "B": 700, "C": 550}
shift = {"A": 0.0, "B": 1.5, "C": -2.0}
frames = []
for site, n in sizes.items():
    g = rng.choice(["north", "south", "east"], size=n, p=[0.4, 0.35, 0.25])
    ge = np.select([g == "north", g == "south"], [0.0, 0.8], -0.5)
    a = rng.normal(shift[site], 1.0, n)
    b = 0.6 * a + ge + shift[site] + rng.normal(0, 1, n)
    c = 0.5 * b + rng.normal(0, 1, n)
    d = 0.4 * c + 0.7 * ge + 0.3 * shift[site] + rng.normal(0, 1, n)
    f = pd.DataFrame({"a": a, "b": b, "c": c, "d": d, "g": g})
    f.loc[rng.random(n) < 0.05, "c"] = np.nan
    f.to_csv(f"{out}/lin-{site}.csv", index=False, float_format="%.17g")
    frames.append(f.assign(site=site))
lin = pd.concat(frames, ignore_index=True)
lin.to_csv(f"{out}/lin-stacked.csv", index=False, float_format="%.17g")
# read back as the tool reads them (the written text, not the draws)
lin = pd.concat([pd.read_csv(f"{out}/lin-{s}.csv").assign(site=s) for s in sizes], ignore_index=True)
cc = lin.dropna(subset=["a", "b", "c", "d", "g"])
design = np.column_stack([
    np.ones(len(cc)), cc["a"], cc["c"],
    (cc["g"] == "north").astype(float), (cc["g"] == "south").astype(float),  # g: levels but one ("east" dropped)
    (cc["site"] == "B").astype(float), (cc["site"] == "C").astype(float),
])
res = {}
for v in ["b", "d"]:
    beta, *_ = np.linalg.lstsq(design, cc[v].to_numpy(), rcond=None)
    res[v] = cc[v].to_numpy() - design @ beta
r = float(np.corrcoef(res["b"], res["d"])[0, 1])
n_lin = len(cc)
df_lin = n_lin - 2 - (design.shape[1] - 1)
t = r * np.sqrt(df_lin / (1 - r * r))
p_lin = float(2 * stats.t.sf(abs(t), df_lin))

# categorical sites
sizes_cat = {"A": 1200, "B": 1800, "C": 1500}
frames = []
for k, (site, n) in enumerate(sizes_cat.items()):
    z = rng.binomial(1, 0.4 + 0.1 * k, n)
    u = rng.binomial(1, 0.5, n)
    v = 1 + rng.binomial(2, 0.3 + 0.2 * u * 0.5 + 0.1 * z, n)
    w = rng.binomial(1, 0.2 + 0.15 * (v - 1) + 0.1 * z + 0.05 * k, n)
    f = pd.DataFrame({"u": u, "v": v, "w": w, "z": z})
    f.to_csv(f"{out}/cat-{site}.csv", index=False)
    frames.append(f.assign(site=site))
cat = pd.concat(frames, ignore_index=True)
cat.to_csv(f"{out}/cat-stacked.csv", index=False)
g2 = 0.0
df_cat = 0
for _, s in cat.groupby(["v", "z", "site"]):
    tab = pd.crosstab(s["u"], s["w"]).to_numpy()
    if tab.shape[0] < 2 or tab.shape[1] < 2:
        continue
    stat, _, dof, _ = stats.chi2_contingency(tab, correction=False, lambda_="log-likelihood")
    g2 += float(stat)
    df_cat += int(dof)
p_cat = float(stats.chi2.sf(g2, df_cat))

ref = {
    "linear": {"x": "b", "y": "d", "n": n_lin, "r": r, "df": int(df_lin), "t": float(t), "p": p_lin,
               "source": "numpy.linalg.lstsq residuals on S and site indicators, scipy.stats.t.sf"},
    "categorical": {"x": "u", "y": "w", "n": int(len(cat)), "g2": g2, "df": df_cat, "p": p_cat,
                    "source": "scipy.stats.chi2_contingency(lambda_='log-likelihood', correction=False) per (v, z, site) stratum, scipy.stats.chi2.sf"},
}
with open(f"{out}/reference.json", "w") as fh:
    json.dump(ref, fh, indent=1)
print(f"numpy {np.__version__}, scipy {stats.__name__ and __import__('scipy').__version__}, pandas {pd.__version__}")
