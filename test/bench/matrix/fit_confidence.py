"""
Fit the coefficients of bearline's confidence (src/analysis/confidence.ts) by logistic
regression (iteratively reweighted least squares, a small ridge) on the per-hop dump of the
accuracy matrix, and check the fit on the held-apart half.

    npx tsx test/bench/accuracy-matrix.ts --set analysis.minConfidence=0 --hops /tmp/hops.jsonl
    python3 test/bench/matrix/fit_confidence.py /tmp/hops.jsonl [src/analysis/confidence.ts]

Label: the hop's direction lies within 5 degrees of a sounding source (err <= 5). Hops without
a candidate, and the KEMAR cells (a head's delays fit no far-field direction), are left out. Features: see FEATURES below (the same transforms as confidence.ts).
numpy is the only dependency.
"""
import json
import sys

import numpy as np

FEATURES = ["agree", "log_agree", "share", "snr", "snr_x_agree", "log_evidence", "log_waves", "onset", "fresh", "fresh_x_snr"]


def features(f):
    snr = min(f["snrDb"], 40.0) / 10.0
    return [
        f["agree"],
        np.log(f["agree"] + 0.01),
        f["share"],
        snr,
        snr * f["agree"],
        np.log(f["evidence"] + 0.01),
        np.log(f["apertureWaves"] + 0.05),
        f["onset"],
        f["fresh"],
        f["fresh"] * snr,
    ]


def load(path):
    rows = {"tune": ([], []), "check": ([], [])}
    with open(path) as fh:
        for line in fh:
            r = json.loads(line)
            if not r.get("dir") or r.get("features") is None:
                continue
            # A head's delays fit no far-field direction of a 0.25 m pair: its angles cannot be
            # within 5 degrees, so those cells say nothing about confidence.
            if r.get("family") == "kemar":
                continue
            x, y = rows[r["split"]]
            x.append(features(r["features"]))
            y.append(1.0 if r["err"] is not None and r["err"] <= 5 else 0.0)
    return {k: (np.array(v[0]), np.array(v[1])) for k, v in rows.items()}


def fit(x, y, ridge=1e-3, iterations=50):
    X = np.hstack([np.ones((len(x), 1)), x])
    w = np.zeros(X.shape[1])
    for _ in range(iterations):
        p = 1 / (1 + np.exp(-X @ w))
        g = X.T @ (y - p) - ridge * w
        H = (X * (p * (1 - p))[:, None]).T @ X + ridge * np.eye(len(w))
        step = np.linalg.solve(H, g)
        w += step
        if np.max(np.abs(step)) < 1e-8:
            break
    return w


def predict(w, x):
    return 1 / (1 + np.exp(-(w[0] + x @ w[1:])))


def isotonic_knots(p, y, bins=20):
    """A monotone map from the logistic output to the observed share (pool-adjacent-violators
    over equal-count bins), as (x, y) knots for piecewise-linear interpolation."""
    order = np.argsort(p)
    groups = np.array_split(order, bins)
    xs = [float(p[g].mean()) for g in groups]
    ys = [float(y[g].mean()) for g in groups]
    ws = [len(g) for g in groups]
    blocks = [[x, yv, w] for x, yv, w in zip(xs, ys, ws)]
    merged = []
    for b in blocks:
        merged.append(b)
        while len(merged) > 1 and merged[-2][1] > merged[-1][1]:
            b2 = merged.pop()
            b1 = merged.pop()
            w = b1[2] + b2[2]
            merged.append([(b1[0] * b1[2] + b2[0] * b2[2]) / w, (b1[1] * b1[2] + b2[1] * b2[2]) / w, w])
    knots = [(0.0, 0.0)] + [(round(b[0], 4), round(b[1], 4)) for b in merged] + [(1.0, 1.0)]
    return knots


def apply_knots(knots, p):
    kx = np.array([k[0] for k in knots])
    ky = np.array([k[1] for k in knots])
    return np.interp(p, kx, ky)


def reliability(p, y, title):
    print(title)
    print("  confidence   hops  mean conf  within 5 deg")
    for lo in np.arange(0, 1, 0.1):
        m = (p >= lo) & (p < lo + 0.1 + (1e-9 if lo >= 0.9 else 0))
        if m.sum() == 0:
            print(f"  {lo:.1f}-{lo + 0.1:.1f}   {0:6d}          -  -")
            continue
        print(f"  {lo:.1f}-{lo + 0.1:.1f}   {m.sum():6d}      {p[m].mean():.3f}      {100 * y[m].mean():5.1f}%")


def write_fitted(path, w, knots):
    """Replace the fitted tables between the FITTED markers of src/analysis/confidence.ts."""
    text = open(path).read()
    a = text.index("// FITTED-BEGIN")
    b = text.index("// FITTED-END")
    coef = ", ".join(f"{v:.4f}" for v in w)
    kn = ", ".join(f"[{x}, {y}]" for x, y in knots)
    block = (
        "// FITTED-BEGIN (written by test/bench/matrix/fit_confidence.py)\n"
        f"export const CONFIDENCE_COEFFICIENTS: readonly number[] = [{coef}];\n"
        f"export const CALIBRATION_KNOTS: readonly (readonly [number, number])[] = [{kn}];\n"
    )
    open(path, "w").write(text[:a] + block + text[b:])
    print(f"wrote the fitted tables to {path}")


def main():
    data = load(sys.argv[1])
    xt, yt = data["tune"]
    xc, yc = data["check"]
    w = fit(xt, yt)
    print("coefficients (intercept first):")
    for name, v in zip(["b0"] + FEATURES, w):
        print(f"  {name:14s} {v:+.4f}")
    knots = isotonic_knots(predict(w, xt), yt)
    print("calibration knots (logistic output -> probability):")
    print("  " + ", ".join(f"[{x}, {yv}]" for x, yv in knots))
    if len(sys.argv) > 2:
        write_fitted(sys.argv[2], w, knots)
    for name, (x, y) in (("tune", (xt, yt)), ("check", (xc, yc))):
        p = apply_knots(knots, predict(w, x))
        brier = np.mean((p - y) ** 2)
        wrong = np.mean((p >= 0.6) & (y == 0))
        print(f"{name}: {len(y)} hops, {100 * y.mean():.1f}% within 5 deg, Brier {brier:.4f}, confident (>= 0.6) and not within 5: {100 * wrong:.2f}% of hops")
        reliability(p, y, f"reliability on {name}")


if __name__ == "__main__":
    main()
