import { Fft, nextPow2 } from './fft.js';

/**
 * outs[m][n] += sum_k irs[m][k] * x[n - k - start] for every m (FFT overlap-add), n in
 * [0, out length). One signal, several responses (one per mic): the signal block is
 * transformed once, and two responses share each inverse transform (h1 + i h2 is inverted to
 * x*h1 + i x*h2, as both are real). Blocks of x that are all zero are skipped.
 */
export function convolveAddMany(x: Float32Array, irs: readonly Float64Array[], start: number, outs: readonly Float32Array[]): void {
  const irLen = Math.max(1, ...irs.map((h) => h.length));
  const size = Math.max(2048, nextPow2(2 * irLen));
  const block = size - irLen + 1;
  const fft = new Fft(size);
  const buf = new Float64Array(size);
  // Spectra of the responses, in pairs: spectrum of (h[2j] + i h[2j+1]).
  const pairSpecs: Float64Array[] = [];
  for (let j = 0; j < irs.length; j += 2) {
    const a = fft.complex();
    const spec = fft.complex();
    for (let k = 0; k < irs[j]!.length; k++) a[2 * k] = irs[j]![k]!;
    const h2 = irs[j + 1];
    if (h2) for (let k = 0; k < h2.length; k++) a[2 * k + 1] = h2[k]!;
    fft.forward(a, spec);
    pairSpecs.push(spec);
  }
  const spec = fft.complex();
  const prod = fft.complex();
  const res = fft.complex();
  for (let b0 = 0; b0 < x.length; b0 += block) {
    const b1 = Math.min(x.length, b0 + block);
    let nonZero = false;
    for (let i = b0; i < b1; i++) {
      if (x[i] !== 0) {
        nonZero = true;
        break;
      }
    }
    if (!nonZero) continue;
    buf.fill(0);
    for (let i = b0; i < b1; i++) buf[i - b0] = x[i]!;
    fft.forwardReal(buf, spec);
    const n = b1 - b0 + irLen - 1;
    const base = b0 + start;
    pairSpecs.forEach((h, j) => {
      for (let k = 0; k < 2 * size; k += 2) {
        const xr = spec[k]!;
        const xi = spec[k + 1]!;
        const hr = h[k]!;
        const hi = h[k + 1]!;
        prod[k] = xr * hr - xi * hi;
        prod[k + 1] = xr * hi + xi * hr;
      }
      fft.inverse(prod, res);
      const o1 = outs[2 * j]!;
      const o2 = outs[2 * j + 1];
      const iStart = Math.max(0, -base);
      const iEnd = Math.min(n, o1.length - base);
      for (let i = iStart; i < iEnd; i++) {
        o1[base + i] = o1[base + i]! + res[2 * i]!;
        if (o2) o2[base + i] = o2[base + i]! + res[2 * i + 1]!;
      }
    });
  }
}
