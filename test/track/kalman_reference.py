"""Textbook Kalman filter on [angle, rate] in matrix form (numpy), for angle-filter.test.ts.

Reads JSON on stdin: init {z, r, rateSigma}, steps [{dt, z|null, r}], q, rateMemoryS.
Writes JSON: per step the state after predict (and update when z is given): angle, rate, p00.
Model (common practice, any estimation text): F = [[1, dt], [0, a]], a = exp(-dt / rateMemoryS),
Q = q [[dt^3/3, dt^2/2], [dt^2/2, dt]], H = [1, 0].
"""
import json
import sys

import numpy as np

cfg = json.load(sys.stdin)
init = cfg["init"]
q = cfg["q"]
x = np.array([init["z"], 0.0])
P = np.diag([init["r"], init["rateSigma"] ** 2])
H = np.array([[1.0, 0.0]])
out = []
for step in cfg["steps"]:
    dt = step["dt"]
    a = np.exp(-dt / cfg["rateMemoryS"])
    F = np.array([[1.0, dt], [0.0, a]])
    Q = q * np.array([[dt**3 / 3, dt**2 / 2], [dt**2 / 2, dt]])
    x = F @ x
    P = F @ P @ F.T + Q
    if step["z"] is not None:
        S = H @ P @ H.T + step["r"]
        K = P @ H.T @ np.linalg.inv(S)
        x = x + (K @ (np.array([step["z"]]) - H @ x)).ravel()
        P = (np.eye(2) - K @ H) @ P
    out.append({"angle": float(x[0]), "rate": float(x[1]), "p00": float(P[0, 0])})
json.dump(out, sys.stdout)
