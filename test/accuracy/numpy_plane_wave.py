"""Shared by numpy_mover.py and numpy_bat.py: a source signal delivered to each mic as a far-field
plane wave from a direction that changes sample by sample (a constant angular rate at a fixed
elevation), the delays applied per sample as a fractional delay by a Hann-windowed sinc
interpolator (common practice, no source: band-limited interpolation), and the take written as a
16-bit WAV with its geometry file beside it.
"""
import json
import wave

import numpy as np

C = 343.0
HALF = 32
# Silence either side of the source signal: room for the interpolator and the largest delay.
PAD = 2 * HALF


def silent_source(n):
    """A source signal of n samples (calls go at PAD + sample index), silent so far."""
    return np.zeros(n + 2 * PAD)


def at_rms(src, rms=0.1):
    """The source scaled so that its calls (its non-zero samples) have this RMS."""
    return src * (rms / np.sqrt(np.mean(src[src != 0] ** 2)))


def path_directions(n, fs, az0_deg, rate_deg_s, el_deg=0.0):
    """(n, 3) unit vectors towards a source at azimuth az0 + rate t (0 = front +y, +90 = right +x)
    and a fixed elevation, one per sample."""
    az = np.radians(az0_deg + rate_deg_s * (np.arange(n) / fs))
    el = np.radians(el_deg)
    return np.stack([np.sin(az) * np.cos(el), np.cos(az) * np.cos(el), np.full(n, np.sin(el))], axis=1)


def render(src, u, mics, fs):
    """src: the source signal (silent_source); u: (n, 3) unit vectors towards the source per
    output sample. Returns (n, mics) samples."""
    n = len(u)
    chans = []
    for m in mics:
        # A mic nearer the source hears it earlier: delay -(p . u) / c (relative to the centre).
        delay = -(u @ m) / C * fs
        pos = np.arange(n) - delay + PAD
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
