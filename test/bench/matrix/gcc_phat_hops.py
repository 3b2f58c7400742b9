"""Per-hop GCC-PHAT delays of a two-channel float WAV in numpy: the outside reference the
matrix's TypeScript baseline (baseline.ts) is checked against in test/accuracy/matrix-corners.test.ts.

Same recipe as baseline.ts, written independently: periodic Hann window, rfft per channel,
conj(X0) X1 / |.| with DC and Nyquist left out, inverse transform at 4x the length, peak within
+-MAXLAG samples, parabolic refinement. Prints the delays (samples, channel 1 minus channel 0)
as a JSON list.

Usage: python3 gcc_phat_hops.py FILE.wav FRAME HOP MAXLAG_SAMPLES
"""
import json
import sys

import numpy as np


def main():
    path, frame, hop, maxlag = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), float(sys.argv[4])
    raw = open(path, 'rb').read()
    if raw[0:4] != b'RIFF' or int.from_bytes(raw[20:22], 'little') != 3:
        raise SystemExit(f'{path} is not a 32-bit float WAV')
    ch = int.from_bytes(raw[22:24], 'little')
    x = np.frombuffer(raw[44:], dtype='<f4').reshape(-1, ch).T.astype(np.float64)
    n_hops = (x.shape[1] - frame) // hop + 1
    win = 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(frame) / frame)
    idx = np.arange(frame)[None, :] + hop * np.arange(n_hops)[:, None]
    spec = np.fft.rfft(x[:, idx] * win, axis=-1)
    g = np.conj(spec[0]) * spec[1]
    g[:, 0] = 0
    g[:, -1] = 0
    g = g / np.maximum(np.abs(g), 1e-30)
    up = 4
    r = np.fft.irfft(g, n=up * frame, axis=-1)
    lag = int(np.ceil(up * maxlag))
    rr = np.concatenate([r[:, -lag:], r[:, : lag + 1]], axis=-1)
    k = np.clip(np.argmax(rr, axis=-1), 1, 2 * lag - 1)
    a = np.arange(n_hops)
    y0, y1, y2 = rr[a, k - 1], rr[a, k], rr[a, k + 1]
    den = y0 - 2 * y1 + y2
    d = np.where(den < 0, 0.5 * (y0 - y2) / np.where(den < 0, den, -1), 0)
    print(json.dumps(((k - lag + d) / up).tolist()))


if __name__ == '__main__':
    main()
