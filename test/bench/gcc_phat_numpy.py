"""Vectorised GCC-PHAT in numpy, the reference the benchmark compares bearline's core with.

Reads interleaved float32 frames from a file, computes for every hop and every pair:
rfft per channel, cross-spectrum, PHAT weighting, irfft, peak within +-maxlag, parabolic
refinement. Prints the seconds per hop (best of 3 runs, in CPU time of the process, as the
benchmark times bearline: time descheduled on a shared machine is not counted) and the mean
delay of pair 0.
"""
import sys, time
import numpy as np

path, channels, frame, hop, maxlag = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5])
x = np.fromfile(path, dtype=np.float32).reshape(-1, channels).T.astype(np.float64)
n_hops = (x.shape[1] - frame) // hop + 1
win = 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(frame) / frame)
pairs = [(a, b) for a in range(channels) for b in range(a + 1, channels)]
idx = np.arange(frame)[None, :] + hop * np.arange(n_hops)[:, None]

def run():
    frames = x[:, idx] * win  # channels x hops x frame
    spec = np.fft.rfft(frames, axis=-1)
    lags = []
    for a, b in pairs:
        g = np.conj(spec[a]) * spec[b]
        g /= np.maximum(np.abs(g), 1e-20)
        r = np.fft.irfft(g, n=frame, axis=-1)
        r = np.concatenate([r[:, -maxlag:], r[:, : maxlag + 1]], axis=-1)
        k = np.argmax(r, axis=-1)
        k = np.clip(k, 1, 2 * maxlag - 1)
        y0, y1, y2 = r[np.arange(n_hops), k - 1], r[np.arange(n_hops), k], r[np.arange(n_hops), k + 1]
        den = y0 - 2 * y1 + y2
        delta = np.where(den < 0, 0.5 * (y0 - y2) / np.where(den < 0, den, -1), 0)
        lags.append(k - maxlag + delta)
    return lags

best = 1e9
for _ in range(3):
    t = time.process_time()
    lags = run()
    best = min(best, time.process_time() - t)
print(f"{best / n_hops:.9f} {float(np.mean(lags[0])):.6f}")
