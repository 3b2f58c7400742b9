"""Shared by numpy_mover.py and numpy_bat.py: a source signal delivered to each mic as a far-field
plane wave from a direction that changes sample by sample, the delays applied per sample as a
fractional delay by a Hann-windowed sinc interpolator (common practice, no source: band-limited
interpolation), and the take written as a 16-bit WAV with its geometry file beside it.
"""
import json
import wave

import numpy as np

C = 343.0
HALF = 32


def render(src, u, mics, fs, pad):
    """src: the signal with `pad` samples of silence either side; u: (n, 3) unit vectors towards
    the source per output sample. Returns (n, mics) samples."""
    n = len(u)
    chans = []
    for m in mics:
        # A mic nearer the source hears it earlier: delay -(p . u) / c (relative to the centre).
        delay = -(u @ m) / C * fs
        pos = np.arange(n) - delay + pad
        k = np.floor(pos).astype(int)
        frac = pos - k
        y = np.zeros(n)
        for j in range(-HALF + 1, HALF + 1):
            x = frac - j
            w = 0.5 * (1 + np.cos(np.pi * x / HALF))
            y += src[k + j] * np.sinc(x) * w
        chans.append(y)
    return np.stack(chans, axis=1)


def write_take(out, data, fs, mics, name):
    """OUT.wav (16-bit, one channel per mic) and OUT.array.json (heading 0)."""
    pcm = np.clip(np.round(data * 32767), -32768, 32767).astype('<i2')
    with wave.open(out, 'wb') as w:
        w.setnchannels(data.shape[1])
        w.setsampwidth(2)
        w.setframerate(fs)
        w.writeframes(pcm.tobytes())
    geometry = {'name': name, 'heading_deg': 0, 'mics': [{'channel': i, 'position_m': list(p)} for i, p in enumerate(mics)]}
    with open(out[:-4] + '.array.json', 'w') as f:
        json.dump(geometry, f)
