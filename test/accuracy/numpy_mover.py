"""A caller moving at a constant angular rate, rendered with numpy independently of bearline's
simulator: far-field plane-wave delays per mic, applied per sample as a fractional delay by a
Hann-windowed sinc interpolator (numpy_plane_wave.py).

Usage: python3 numpy_mover.py OUT.wav AZ0_DEG RATE_DEG_S DURATION_S [CALL_S EVERY_S [RATE_HZ]]
(calls CALL_S long, one every EVERY_S seconds from 0.2 s on: 0.4 and 0.6 when not given).
Writes OUT.wav (4 channels, 16-bit, RATE_HZ: 48 kHz when not given), OUT.array.json (a 20 cm square, heading 0) and
prints the calls as JSON: [[start_s, end_s], ...]. Azimuth(t) = AZ0 + RATE * t (0 = front +y,
+90 = right +x); the source is in the horizontal plane; c = 343 m/s.
"""
import json
import sys

import numpy as np

from numpy_plane_wave import PAD, at_rms, path_directions, render, silent_source, write_take

FS = 48000
MICS = np.array([[-0.1, 0.1, 0.0], [0.1, 0.1, 0.0], [0.1, -0.1, 0.0], [-0.1, -0.1, 0.0]])


def band_noise(rng, n, lo, hi):
    spec = np.fft.rfft(rng.standard_normal(n))
    f = np.fft.rfftfreq(n, 1 / FS)
    spec[(f < lo) | (f > hi)] = 0
    return np.fft.irfft(spec, n)


def main():
    out, az0, rate, dur = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
    call_s = float(sys.argv[5]) if len(sys.argv) > 5 else 0.4
    every_s = float(sys.argv[6]) if len(sys.argv) > 6 else 0.6
    global FS
    FS = int(sys.argv[7]) if len(sys.argv) > 7 else 48000
    rng = np.random.default_rng(7)
    n = int(dur * FS)
    src = silent_source(n)
    calls = []
    t = 0.2
    while t + call_s <= dur - 0.1:
        a, b = int(t * FS), int((t + call_s) * FS)
        burst = band_noise(rng, b - a, 500, 4000)
        ramp = np.minimum(1, np.minimum(np.arange(b - a), np.arange(b - a)[::-1]) / (0.005 * FS))
        src[PAD + a : PAD + b] = burst * ramp
        calls.append([t, t + call_s])
        t += every_s
    u = path_directions(n, FS, az0, rate)
    data = render(at_rms(src), u, MICS, FS) + 1e-3 * rng.standard_normal((n, 4))
    write_take(out, data, FS, MICS, 'square-20cm-numpy')
    print(json.dumps(calls))


main()
