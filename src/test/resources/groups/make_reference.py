"""Reference values for the grouped fit tests: numpy (LAPACK syevd through numpy.linalg.eigh) eigenvalues and
eigenvectors of each class's covariance (ddof = 1) and correlation in the wine dataset (src/test/resources/datasets).
Run from this folder: python3 make_reference.py > wine-by-class.reference.json"""
import csv, json, sys
import numpy as np

with open("../datasets/wine.csv") as f:
    rows = list(csv.reader(f))
header, data = rows[0], rows[1:]
features = header[:-1]
x = np.array([[float(v) for v in r[:-1]] for r in data])
cls = np.array([r[-1] for r in data])
out = {"source": "numpy " + np.__version__ + " linalg.eigh of cov(ddof=1) and corrcoef per class",
       "features": features, "groups": {}}
for c in sorted(set(cls)):
    xc = x[cls == c]
    entry = {"rows": int(xc.shape[0])}
    for name, m in (("covariance", np.cov(xc, rowvar=False, ddof=1)), ("correlation", np.corrcoef(xc, rowvar=False))):
        w, v = np.linalg.eigh(m)
        order = np.argsort(w)[::-1]
        w, v = w[order], v[:, order]
        # sign convention of the product's tests: the largest-magnitude entry of each eigenvector positive
        for j in range(v.shape[1]):
            if v[np.argmax(np.abs(v[:, j])), j] < 0:
                v[:, j] = -v[:, j]
        entry[name] = {"eigenvalues": [float(a) for a in w],
                       "loadings_first3": [[float(a) for a in v[:, j]] for j in range(3)]}
    entry["means"] = [float(a) for a in xc.mean(axis=0)]
    out["groups"][c] = entry
json.dump(out, sys.stdout, indent=1)
print()
