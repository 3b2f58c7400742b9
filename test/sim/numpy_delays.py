"""Independent delay and level measurements with numpy, for the simulator's tests.

Usage: python3 numpy_delays.py FILE.f32 CHANNELS RATE MODE [ARGS]
FILE.f32 holds interleaved little-endian float32 samples.
Modes:
  tdoa [START END]   delay of every channel relative to channel 0 (s), from the peak of the
                     cross-correlation upsampled 64x by zero-padding its spectrum, refined by a
                     parabola through the three highest points; optional sample range.
  windows W0 WIN STEP COUNT
                     delay of channel 1 relative to channel 0 (s) in COUNT windows of WIN
                     samples starting at W0, W0 + STEP, ... (same method as tdoa).
  peak               time (s) of the largest peak of each channel, upsampled the same way.
  rms                RMS of each channel.
Prints one JSON list.
"""
import json
import sys

import numpy as np

UP = 64


def upsampled_peak(spec, n):
    """Peak position (in original samples, circular, signed) of irfft(spec) upsampled UP times."""
    m = n * UP
    full = np.zeros(m // 2 + 1, dtype=complex)
    full[: len(spec)] = spec
    x = np.fft.irfft(full, m)
    k = int(np.argmax(x))
    y0, y1, y2 = x[(k - 1) % m], x[k], x[(k + 1) % m]
    den = y0 - 2 * y1 + y2
    frac = 0.5 * (y0 - y2) / den if den != 0 else 0.0
    pos = (k + frac) / UP
    if pos > n / 2:
        pos -= n
    return pos


def main():
    path, channels, rate, mode = sys.argv[1], int(sys.argv[2]), float(sys.argv[3]), sys.argv[4]
    data = np.fromfile(path, dtype="<f4").astype(np.float64).reshape(-1, channels).T
    if mode == "tdoa":
        if len(sys.argv) > 6:
            data = data[:, int(sys.argv[5]) : int(sys.argv[6])]
        n = 2 * data.shape[1]
        ref = np.fft.rfft(data[0], n)
        out = []
        for c in range(channels):
            spec = np.fft.rfft(data[c], n) * np.conj(ref)
            out.append(upsampled_peak(spec, n) / rate)
    elif mode == "windows":
        w0, win, step, count = (int(a) for a in sys.argv[5:9])
        out = []
        for j in range(count):
            seg = data[:, w0 + j * step : w0 + j * step + win]
            n = 2 * win
            spec = np.fft.rfft(seg[1], n) * np.conj(np.fft.rfft(seg[0], n))
            out.append(upsampled_peak(spec, n) / rate)
    elif mode == "peak":
        out = []
        for c in range(channels):
            n = 2 * data.shape[1]
            pos = upsampled_peak(np.fft.rfft(data[c], n), n)
            out.append(pos / rate)
    elif mode == "rms":
        out = [float(np.sqrt(np.mean(d * d))) for d in data]
    else:
        raise SystemExit("unknown mode " + mode)
    print(json.dumps(out))


main()
