"""Bench takes made independently of bearline with numpy (a far-field source, one WAV per
direction), for the bench-check tests.

Each mic hears the same white noise delayed by its far-field arrival time
    t_i = -(p_i . u) / c + skew_i
(the array frame of bearline's interface.md: x right, y front, z up; azimuth 0 = front,
+90 = right). The delay is applied exactly in the frequency domain (a linear phase
exp(-j 2 pi f t), the shift theorem of the discrete Fourier transform) on a padded buffer
whose ends are cut off. Then per channel: gain in dB, polarity, independent sensor noise,
and finally the channel order (`order[k]` = the mic recorded on channel k).

Usage: python3 make_takes.py SPEC.json   (SPEC: see the keys read below)
Writes 24-bit PCM WAV files with the standard library's wave module.
"""
import json
import sys
import wave

import numpy as np


def write_wav24(path, rate, data):
    """data: frames x channels, floats in [-1, 1]."""
    ints = np.clip(np.round(data * 8388607.0), -8388608, 8388607).astype('<i4')
    raw = ints.view(np.uint8).reshape(-1, 4)[:, :3].tobytes()
    with wave.open(path, 'wb') as w:
        w.setnchannels(data.shape[1])
        w.setsampwidth(3)
        w.setframerate(rate)
        w.writeframes(raw)


def unit(az_deg, el_deg):
    az = np.radians(az_deg)
    el = np.radians(el_deg)
    return np.array([np.sin(az) * np.cos(el), np.cos(az) * np.cos(el), np.sin(el)])


def main():
    spec = json.load(open(sys.argv[1]))
    rate = spec['rate']
    dur = spec['duration_s']
    c = spec.get('c', 343.0)
    pos = np.array(spec['positions_m'], dtype=float)
    m = len(pos)
    skew = np.array(spec.get('skew_s', [0.0] * m))
    gain = np.array(spec.get('gain_db', [0.0] * m))
    pol = np.array(spec.get('polarity', [1] * m))
    order = spec.get('order', list(range(m)))
    snr_db = spec.get('snr_db', 30.0)
    level_db = spec.get('level_dbfs', -20.0)
    rng = np.random.default_rng(spec.get('seed', 1))
    pad = int(0.05 * rate)
    n = int(round(dur * rate)) + 2 * pad
    for take in spec['takes']:
        u = unit(take['az'], take.get('el', 0.0))
        src = rng.standard_normal(n)
        spec_src = np.fft.rfft(src)
        spec_src[-1] = 0.0  # the Nyquist bin has no well-defined fractional delay
        f = np.fft.rfftfreq(n, 1.0 / rate)
        amp = 10 ** (level_db / 20)
        mics = []
        for i in range(m):
            t = -(pos[i] @ u) / c + skew[i]
            x = np.fft.irfft(spec_src * np.exp(-2j * np.pi * f * t), n)[pad:-pad]
            x = x * amp * 10 ** (gain[i] / 20) * pol[i]
            x = x + rng.standard_normal(len(x)) * amp * 10 ** (-snr_db / 20)
            mics.append(x)
        data = np.stack([mics[k] for k in order], axis=1)
        write_wav24(take['out'], rate, data)


if __name__ == '__main__':
    main()
