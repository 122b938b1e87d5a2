"""Makes the second-writer corpus: rows generated here (numpy, fixed seed), written as CSV, turned into Parquet by
DuckDB (make_parquet.mjs), and the reference values of the fits computed here with numpy's LAPACK eigensolver.

Run from this folder: python3 make_tables.py && node make_parquet.mjs   (numpy 2.x; @duckdb/node-api from npm)
The CSV files are inputs of make_parquet.mjs only; the tests read the Parquet files and reference.json.

Each table mixes what other writers produce and Spark's own writer rarely does in a test: dictionary pages whose
dictionary shrinks from one row group to the next (the first row group has many distinct values, later ones few),
nulls in every column, a row group where one column is all null, and float, int, bigint and decimal columns.
"""
import csv
import json

import numpy as np

RNG = np.random.default_rng(20261203)
ROW_GROUP = 2048  # DuckDB's vector size; its ROW_GROUP_SIZE is honoured in multiples of it


def edge_cache_rows(groups):
    """Telemetry of edge cache hosts: latent load and cache pressure drive six metrics."""
    n = groups * ROW_GROUP
    load = RNG.normal(0, 1, n)
    pressure = RNG.normal(0, 1, n)
    cols = {
        "req_rate": 900 + 120 * load + RNG.normal(0, 8, n),
        "egress_gbps": 4 + 0.9 * load + 0.2 * pressure + RNG.normal(0, 0.1, n),
        "hit_ratio": 0.93 - 0.02 * pressure + RNG.normal(0, 0.004, n),
        "disk_util": 55 + 9 * pressure + RNG.normal(0, 2, n),
        "cpu_pct": 40 + 11 * load + 3 * pressure + RNG.normal(0, 1.5, n),
        "tcp_retrans": 20 + 4 * pressure + 2 * load + RNG.normal(0, 1, n),
    }
    # each row group repeats a few values per column, so the writer chooses dictionary pages: 90 distinct values in
    # the first row group, then 8, 9, ...: a small dictionary after a large one
    for name, v in cols.items():
        for g in range(groups):
            seg = slice(g * ROW_GROUP, (g + 1) * ROW_GROUP)
            palette = v[seg][:90 if g == 0 else 7 + g].copy()
            v[seg] = palette[RNG.integers(0, len(palette), ROW_GROUP)]
    return n, cols


def with_nulls(n, cols, share, all_null):
    """Nulls at random cells; column all_null[0] is null in the whole row group all_null[1]."""
    mask = {name: RNG.random(n) < share for name in cols}
    name, g = all_null
    mask[name][g * ROW_GROUP:(g + 1) * ROW_GROUP] = True
    return mask


def write_csv(path, names, columns, mask, fmt):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(names)
        n = len(columns[0])
        for i in range(n):
            w.writerow(["" if m is not None and m[i] else fmt[j](c[i]) for j, (c, m) in enumerate(zip(columns, mask))])


def reference(x):
    """Covariance fit of the complete rows: eigenvalues (n - 1 divisor), means, loadings with the sign convention
    (largest |loading| positive), and the scores of the first 5 complete rows on all components (with their seq)."""
    keep = ~np.isnan(x).any(axis=1)
    xc = x[keep]
    mean = xc.mean(axis=0)
    cov = np.cov(xc, rowvar=False, ddof=1)
    vals, vecs = np.linalg.eigh(cov)
    order = np.argsort(vals)[::-1]
    vals, vecs = vals[order], vecs[:, order]
    for c in range(vecs.shape[1]):
        j = np.argmax(np.abs(vecs[:, c]))
        if vecs[j, c] < 0:
            vecs[:, c] = -vecs[:, c]
    scores = (xc[:5] - mean) @ vecs
    return {"rows": int(keep.sum()), "eigenvalues": vals.tolist(), "means": mean.tolist(),
            "loadings_column_major": vecs.T.reshape(-1).tolist(), "first_scores": scores.tolist(),
            "first_seq": np.flatnonzero(keep)[:5].tolist()}


def main():
    out = {"source": "numpy %s, numpy.linalg.eigh of numpy.cov(ddof=1) of the complete rows" % np.__version__}
    # 1. doubles: dictionary pages shrinking across 4 row groups, 3% nulls, one column null in row group 2
    n, cols = edge_cache_rows(4)
    names = list(cols)
    mask = with_nulls(n, cols, 0.03, ("disk_util", 2))
    hosts = ["edge-%03d" % (i % 61) for i in range(n)]
    seq = np.arange(n)
    write_csv("doubles.csv", ["seq", "host"] + names, [seq, hosts] + [cols[c] for c in names],
              [None, None] + [mask[c] for c in names], [str, str] + [lambda v: repr(float(v))] * len(names))
    x = np.column_stack([np.where(mask[c], np.nan, cols[c]) for c in names])
    out["doubles"] = dict(reference(x), features=names)
    # 2. mixed types: float, int, bigint, decimal(12,3) and double, 5% nulls, dictionary pages as above
    n, cols = edge_cache_rows(3)
    mixed = {
        "hit_ratio": np.float32(cols["hit_ratio"]).astype(np.float64),  # exact float32 values
        "disk_util": np.round(cols["disk_util"]),  # stored as INTEGER
        "req_rate": np.round(cols["req_rate"] * 1000),  # stored as BIGINT
        "egress_gbps": np.round(cols["egress_gbps"], 3),  # stored as DECIMAL(12,3)
        "cpu_pct": cols["cpu_pct"],  # DOUBLE
    }
    mnames = list(mixed)
    mask = with_nulls(n, mixed, 0.05, ("req_rate", 1))
    fmt = [lambda v: repr(float(np.float32(v))), lambda v: str(int(v)), lambda v: str(int(v)),
           lambda v: "%.3f" % v, lambda v: repr(float(v))]
    write_csv("mixed.csv", ["seq"] + mnames, [np.arange(n)] + [mixed[c] for c in mnames],
              [None] + [mask[c] for c in mnames], [str] + fmt)
    x = np.column_stack([np.where(mask[c], np.nan, mixed[c]) for c in mnames])
    out["mixed"] = dict(reference(x), features=mnames)
    with open("reference.json", "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


main()
