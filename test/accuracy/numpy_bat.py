"""An ultrasonic caller passing the array, rendered with numpy independently of bearline's
simulator: short frequency-modulated calls (a linear sweep from HI_HZ down to LO_HZ, 5 ms, one
every 80 ms), far-field plane-wave delays per mic applied per sample as a fractional delay by a
Hann-windowed sinc interpolator (numpy_plane_wave.py), at 192 kHz on a 10 cm tetrahedron.

Usage: python3 numpy_bat.py OUT.wav AZ0_DEG RATE_DEG_S DURATION_S
Writes OUT.wav (4 channels, 16-bit, 192 kHz), OUT.array.json and prints the calls as JSON:
[[start_s, end_s], ...]. Azimuth(t) = AZ0 + RATE * t (0 = front +y, +90 = right +x), elevation
15 deg; c = 343 m/s.
"""
import json
import sys

import numpy as np

from numpy_plane_wave import PAD, at_rms, path_directions, render, silent_source, write_take

FS = 192000
S = 0.1 / np.sqrt(8)  # a regular tetrahedron of 10 cm edges
MICS = np.array([[S, S, S], [-S, -S, S], [-S, S, -S], [S, -S, -S]])
HI_HZ, LO_HZ = 70000.0, 30000.0
CALL_S, EVERY_S = 0.005, 0.08
ELEVATION_DEG = 15.0


def main():
    out, az0, rate, dur = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
    rng = np.random.default_rng(11)
    n = int(dur * FS)
    src = silent_source(n)
    calls = []
    t = 0.1
    m = int(CALL_S * FS)
    tt = np.arange(m) / FS
    # Linear sweep: phase = 2 pi (HI t - (HI - LO) t^2 / (2 CALL_S)); a Hann envelope.
    sweep = np.sin(2 * np.pi * (HI_HZ * tt - (HI_HZ - LO_HZ) * tt**2 / (2 * CALL_S))) * np.hanning(m)
    while t + CALL_S <= dur - 0.05:
        a = int(t * FS)
        src[PAD + a : PAD + a + m] = sweep
        calls.append([t, t + CALL_S])
        t += EVERY_S
    u = path_directions(n, FS, az0, rate, ELEVATION_DEG)
    data = render(at_rms(src), u, MICS, FS) + 1e-3 * rng.standard_normal((n, 4))
    write_take(out, data, FS, MICS, 'tetrahedron-10cm-numpy')
    print(json.dumps(calls))


main()
