#!/usr/bin/env python3
"""Reference fits of key + adjustment detection functions, independent of stipple.

Draws distances from key + one adjustment term (fixed seeds, rejection sampling) and fits
the key alone and key + one term by maximum likelihood with SciPy (Nelder-Mead from
several starts, scipy.integrate.quad for the normalising integral). The model is written
out from its published definition (Buckland, Anderson, Burnham, Laake, Borchers & Thomas
2001, Introduction to Distance Sampling, section 3.3.1): g(x) = k(x)(1 + sum a_j t_j(x)) /
(k(0)(1 + sum a_j t_j(0))), keys half-normal exp(-x^2/2s^2), hazard-rate
1 - exp(-(x/s)^-b) (Hayes & Buckland 1983) and uniform; series cosine cos(m pi x / w),
simple polynomial (x/w)^(2m) and Hermite He_2m(x/s) (He from scipy.special), with m = 1
for the uniform key and m = 2 (the series' second term) for the others.

Writes one CSV of distances per case and reference.json. Run with Debian's python3-scipy:
    python3 make_reference.py
"""
import json
import math

import numpy as np
from scipy import integrate, optimize, special

W = 50.0
CASES = [
    # name, kind, key, series, generating key parameters, coefficient, n, seed
    ("uniform-cosine", "line", "uniform", "cosine", [], 0.7, 800, 11),
    ("uniform-polynomial", "line", "uniform", "polynomial", [], -0.8, 800, 12),
    ("uniform-hermite", "line", "uniform", "hermite", [], -0.6, 800, 13),
    ("half-normal-cosine", "line", "half-normal", "cosine", [20.0], 0.3, 800, 14),
    ("half-normal-polynomial", "line", "half-normal", "polynomial", [40.0], -0.8, 800, 15),
    ("half-normal-hermite", "line", "half-normal", "hermite", [40.0], 0.15, 800, 16),
    ("hazard-rate-cosine", "line", "hazard-rate", "cosine", [25.0, 2.5], 0.25, 800, 17),
    ("hazard-rate-polynomial", "line", "hazard-rate", "polynomial", [35.0, 3.0], -0.7, 800, 18),
    ("hazard-rate-hermite", "line", "hazard-rate", "hermite", [30.0, 3.0], 0.1, 800, 19),
    ("point-half-normal-cosine", "point", "half-normal", "cosine", [20.0], 0.3, 800, 20),
    ("binned-uniform-cosine", "binned", "uniform", "cosine", [], 0.7, 800, 21),
]
BIN_EDGES = [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0]


def key_value(key, p, x):
    if key == "uniform":
        return 1.0
    if key == "half-normal":
        return math.exp(-x * x / (2.0 * p[0] ** 2))
    if x <= 0.0:
        return 1.0
    return 1.0 - math.exp(-((x / p[0]) ** (-p[1])))


def term(key, series, p, x):
    m = 1 if key == "uniform" else 2
    if series == "cosine":
        return math.cos(m * math.pi * x / W)
    if series == "polynomial":
        return (x / W) ** (2 * m)
    scale = W if key == "uniform" else p[0]
    return float(special.eval_hermitenorm(2 * m, x / scale))


def g(key, series, p, a, x):
    top = key_value(key, p, x) * (1.0 + (a * term(key, series, p, x) if series else 0.0))
    bottom = key_value(key, p, 0.0) * (1.0 + (a * term(key, series, p, 0.0) if series else 0.0))
    return top / bottom


def monotone(key, series, p, a):
    xs = np.linspace(0.0, W, 2001)
    v = np.array([g(key, series, p, a, x) for x in xs])
    return bool(np.all(np.diff(v) <= 1e-9) and np.all(v >= 0.0))


def integral(key, series, p, a, kind, lo, hi):
    if kind == "point":
        f = lambda r: 2.0 * math.pi * r * g(key, series, p, a, r)
    else:
        f = lambda x: g(key, series, p, a, x)
    return integrate.quad(f, lo, hi, epsabs=1e-13, epsrel=1e-12, limit=200)[0]


def unpack(key, series, theta):
    k = {"uniform": 0, "half-normal": 1, "hazard-rate": 2}[key]
    p = [math.exp(t) for t in theta[:k]]
    a = theta[k] if series else 0.0
    return p, a


def negative_log_likelihood(theta, key, series, kind, data):
    p, a = unpack(key, series, theta)
    if series and not monotone_fast(key, series, p, a):
        return 1e12
    integrand_kind = "point" if kind == "point" else "line"
    if kind == "binned":
        counts, edges = data
        total = integral(key, series, p, a, integrand_kind, edges[0], edges[-1])
        ll = 0.0
        for c, lo, hi in zip(counts, edges[:-1], edges[1:]):
            if c:
                part = integral(key, series, p, a, integrand_kind, lo, hi)
                if part <= 0.0:
                    return 1e12
                ll += c * math.log(part / total)
        return -ll
    total = integral(key, series, p, a, integrand_kind, 0.0, W)
    values = [g(key, series, p, a, x) for x in data]
    if total <= 0.0 or min(values) <= 0.0:
        return 1e12
    return -(sum(math.log(v) for v in values) - len(data) * math.log(total))


def monotone_fast(key, series, p, a):
    xs = np.linspace(0.0, W, 201)
    v = [g(key, series, p, a, x) for x in xs]
    return all(v[i + 1] <= v[i] + 1e-12 for i in range(len(v) - 1)) and min(v) >= 0.0


def fit(key, series, kind, data, distances):
    rms = math.sqrt(np.mean(np.square(distances)))
    if kind == "point":
        rms /= math.sqrt(2.0)
    key_starts = {"uniform": [[]], "half-normal": [[math.log(rms)], [math.log(2 * rms)]],
                  "hazard-rate": [[math.log(rms), math.log(3.0)], [math.log(2 * rms), math.log(2.0)],
                                  [math.log(rms), math.log(5.0)]]}[key]
    coefficient_starts = [0.0, 0.3, -0.3, 0.05, -0.05] if series else [None]
    best = None
    for ks in key_starts:
        for cs in coefficient_starts:
            x0 = list(ks) + ([cs] if series else [])
            if not x0:
                value = negative_log_likelihood([], key, series, kind, data)
                return [], value
            if negative_log_likelihood(x0, key, series, kind, data) >= 1e12:
                continue
            r = optimize.minimize(negative_log_likelihood, x0, args=(key, series, kind, data),
                                  method="Nelder-Mead",
                                  options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 20000, "maxfev": 40000})
            r = optimize.minimize(negative_log_likelihood, r.x, args=(key, series, kind, data),
                                  method="Nelder-Mead",
                                  options={"xatol": 1e-12, "fatol": 1e-13, "maxiter": 20000, "maxfev": 40000})
            if best is None or r.fun < best[1]:
                best = (list(r.x), float(r.fun))
    return best


def draw(key, series, p, a, kind, n, seed):
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < n:
        if kind == "point":
            x = W * math.sqrt(rng.uniform())  # uniform over the disc
        else:
            x = W * rng.uniform()
        if rng.uniform() < g(key, series, p, a, x):
            out.append(round(x, 6))
    return out


def main():
    cases = []
    for name, kind, key, series, p, a, n, seed in CASES:
        assert monotone(key, series, p, a), name
        distances = draw(key, series, p, a, kind, n, seed)
        with open(name + ".csv", "w") as f:
            f.write("distance\n")
            f.writelines(f"{x:.6f}\n" for x in distances)
        if kind == "binned":
            counts = np.histogram(distances, bins=BIN_EDGES)[0].tolist()
            data = (counts, BIN_EDGES)
        else:
            data = distances
        integrand_kind = "point" if kind == "point" else "line"
        record = {"name": name, "kind": kind, "key": key, "adjustment": series, "truncation_m": W,
                  "generating": {"key_parameters": p, "coefficient": a,
                                 "effective": integral(key, series, p, a, integrand_kind, 0.0, W)},
                  "n": n, "seed": seed}
        if kind == "binned":
            record["bin_edges"] = BIN_EDGES
            record["bin_counts"] = counts
        for label, s in (("key_only", None), ("adjusted", series)):
            theta, value = fit(key, s, kind, data, distances)
            q = len(theta)
            pp, aa = unpack(key, s, theta)
            record[label] = {"key_parameters": pp, "coefficient": aa if s else None,
                             "log_likelihood": -value, "aic": 2.0 * value + 2.0 * q,
                             "effective": integral(key, s, pp, aa, integrand_kind, 0.0, W),
                             "monotone": monotone(key, s, pp, aa)}
        record["aic_gain"] = record["key_only"]["aic"] - record["adjusted"]["aic"]
        cases.append(record)
        print(name, "gain %.3f" % record["aic_gain"], "eff %.4f (true %.4f)" % (
            record["adjusted"]["effective"], record["generating"]["effective"]), record["adjusted"]["monotone"])
    with open("reference.json", "w") as f:
        json.dump({"source": "make_reference.py (SciPy %s, NumPy %s)" % (__import__("scipy").__version__, np.__version__),
                   "cases": cases}, f, indent=1)


if __name__ == "__main__":
    main()
