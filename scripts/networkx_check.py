#!/usr/bin/env python3
"""Reference answers for d-separation and minimal separating sets, computed by networkx.

Usage:
  python3 scripts/networkx_check.py generate OUT.json [--seed N]
      Generate seeded random causal graphs (some unmeasured nodes, some bidirected edges) and
      record networkx's answers: nx.is_d_separator for random disjoint (xs, ys, given) triples and
      nx.find_minimal_d_separator(G, x, y, restricted=measured nodes) for pairs of measured nodes.
  python3 scripts/networkx_check.py verify CASES.json
      Read {"graphs": [...], "checks": [{"graph": i, "x": .., "y": .., "z": [..]}]} on stdin-free
      JSON and print, per check, [nx.is_d_separator, nx.is_minimal_d_separator(restricted=measured)].

A bidirected edge a <-> b is modelled as an explicit latent parent of a and b whose name is
guaranteed not to be a node name; latent nodes are never allowed in a separating set.
The committed fixture test/fixtures/networkx/cases.json is `generate` with the default seed.
Needs networkx >= 3.3 (is_d_separator, find_minimal_d_separator); written against 3.6.
"""
import json
import random
import sys

import networkx as nx

UNICODE = ["β", "γ₂", "血压", "café", "Δt", "naïve"]


def random_graph(rng, n, density, n_unmeasured, n_bidirected, unicode):
    names = [
        (f"{UNICODE[(i // 3) % len(UNICODE)]}{i}" if unicode and i % 3 == 0 else f"v{i}")
        for i in range(n)
    ]
    order = names[:]
    rng.shuffle(order)  # hidden causal order
    arrows = [
        [order[i], order[j]] for i in range(n) for j in range(i + 1, n) if rng.random() < density
    ]
    pairs = [(a, b) for i, a in enumerate(names) for b in names[i + 1:]]
    bidirected = [list(p) for p in rng.sample(pairs, min(n_bidirected, len(pairs)))]
    unmeasured = rng.sample(names, min(n_unmeasured, max(0, n - 2)))
    return {"nodes": names, "arrows": arrows, "bidirected": bidirected, "unmeasured": unmeasured}


def to_networkx(g):
    G = nx.DiGraph()
    G.add_nodes_from(g["nodes"])
    G.add_edges_from(tuple(a) for a in g["arrows"])
    taken = set(g["nodes"])
    for k, (a, b) in enumerate(g["bidirected"]):
        latent = f"<latent {k}>"
        while latent in taken:
            latent += "'"
        taken.add(latent)
        G.add_edge(latent, a)
        G.add_edge(latent, b)
    measured = set(g["nodes"]) - set(g["unmeasured"])
    return G, measured


def generate(seed):
    rng = random.Random(seed)
    graphs = []
    sizes = [3, 4, 5, 6, 7, 8] * 4 + [12, 15, 20, 25, 40, 60]
    for gi, n in enumerate(sizes):
        density = rng.choice([0.15, 0.3, 0.5]) if n <= 12 else 3.0 / n
        g = random_graph(rng, n, density, rng.randint(0, 3), rng.randint(0, 2), unicode=gi % 4 == 1)
        G, measured = to_networkx(g)
        names = g["nodes"]
        dsep = []
        for _ in range(25):
            k = rng.randint(2, min(n, 7))
            pick = rng.sample(names, k)
            nx_ = rng.randint(1, max(1, min(2, k - 1)))
            ny_ = rng.randint(1, max(1, min(2, k - nx_)))
            xs, ys, zs = pick[:nx_], pick[nx_:nx_ + ny_], pick[nx_ + ny_:]
            if not ys:
                continue
            dsep.append({"xs": xs, "ys": ys, "given": zs,
                         "separated": bool(nx.is_d_separator(G, set(xs), set(ys), set(zs)))})
        meas = [v for v in names if v in measured]
        pairs = [(a, b) for i, a in enumerate(meas) for b in meas[i + 1:]]
        if len(pairs) > 30:
            pairs = rng.sample(pairs, 30)
        separators = []
        for a, b in pairs:
            z = nx.find_minimal_d_separator(G, a, b, restricted=measured - {a, b})
            separators.append({"x": a, "y": b, "set": None if z is None else sorted(z)})
            if z is not None:
                dsep.append({"xs": [a], "ys": [b], "given": sorted(z), "separated": True})
        g["dsep"] = dsep
        g["separators"] = separators
        graphs.append(g)
    return {
        "generator": "scripts/networkx_check.py generate",
        "seed": seed,
        "networkx": nx.__version__,
        "graphs": graphs,
    }


def verify(cases):
    built = [to_networkx(g) for g in cases["graphs"]]
    out = []
    for c in cases["checks"]:
        G, measured = built[c["graph"]]
        z = set(c["z"])
        sep = bool(nx.is_d_separator(G, {c["x"]}, {c["y"]}, z))
        minimal = bool(sep and nx.is_minimal_d_separator(G, c["x"], c["y"], z, restricted=measured - {c["x"], c["y"]}))
        out.append([sep, minimal])
    return {"networkx": nx.__version__, "answers": out}


def main(argv):
    if len(argv) >= 2 and argv[0] == "generate":
        seed = int(argv[argv.index("--seed") + 1]) if "--seed" in argv else 20240611
        with open(argv[1], "w", encoding="utf-8") as f:
            json.dump(generate(seed), f, ensure_ascii=False, indent=1)
            f.write("\n")
        return 0
    if len(argv) == 2 and argv[0] == "verify":
        with open(argv[1], encoding="utf-8") as f:
            cases = json.load(f)
        json.dump(verify(cases), sys.stdout)
        return 0
    sys.stderr.write(__doc__)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
