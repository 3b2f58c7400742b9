"""Dummy-head takes from the MIT KEMAR set (W. G. Gardner and K. D. Martin, "HRTF
measurements of a KEMAR", JASA 97(6), 3907-3908, 1995), shipped by Debian's libmysofa1 as
/usr/share/libmysofa/MIT_KEMAR_normal_pinna.sofa and read here with mysofa2json
(libmysofa-utils). For every horizontal-plane direction within the front half, white noise
(numpy) is convolved with the left and right ear responses: channel 0 = left ear,
channel 1 = right ear. SOFA's frame is x front, y left, z up with azimuth counter-clockwise
(towards the left); bearline's azimuth runs clockwise (towards the right), so ours = -SOFA's.

Usage: python3 kemar_takes.py OUT_DIR   prints JSON: rate, ear positions, takes [{az, path}].
"""
import json
import os
import subprocess
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from make_takes import write_wav24  # noqa: E402

SOFA = '/usr/share/libmysofa/MIT_KEMAR_normal_pinna.sofa'


def main():
    out = sys.argv[1]
    d = json.loads(subprocess.run(['mysofa2json', SOFA], capture_output=True, check=True).stdout)
    v = d['Variables']
    src = np.array(v['SourcePosition']['Values']).reshape(-1, 3)
    n_taps = d['Dimensions']['N']
    ir = np.array(v['Data.IR']['Values']).reshape(-1, 2, n_taps)
    fs = int(v['Data.SamplingRate']['Values'][0])
    ears = np.array(v['ReceiverPosition']['Values']).reshape(2, 3)
    rng = np.random.default_rng(7)
    takes = []
    for i in np.where(np.abs(src[:, 1]) < 1e-6)[0]:
        sofa_az = src[i, 0] if src[i, 0] <= 180 else src[i, 0] - 360
        ours = float(-sofa_az) + 0.0
        if abs(ours) > 90:
            continue
        noise = rng.standard_normal(fs) * 0.05
        left = np.convolve(noise, ir[i, 0])[:fs]
        right = np.convolve(noise, ir[i, 1])[:fs]
        path = os.path.join(out, f'kemar-az{ours:g}.wav')
        write_wav24(path, fs, np.stack([left, right], axis=1))
        takes.append({'az': ours, 'path': path})
    print(json.dumps({'rate': fs, 'ears_sofa_m': ears.tolist(), 'takes': takes}))


if __name__ == '__main__':
    main()
