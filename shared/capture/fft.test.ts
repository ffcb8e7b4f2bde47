import FFT from 'fft.js';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { dftBin, fft, harmonicAmplitudes, thdPct } from './fft';

// Reference: fft.js (npm), a general-purpose radix-4 FFT with the same sign convention e^{−2πi·kn/N}.
function reference(x: number[]): number[] {
  const f = new FFT(x.length);
  const out = f.createComplexArray() as number[];
  f.realTransform(out, x);
  f.completeSpectrum(out);
  return out;
}

describe('FFT and DFT against fft.js', () => {
  it('matches fft.js on random real input of every power-of-two size from 4 to 4096', () => {
    fc.assert(
      fc.property(fc.integer({ min: 2, max: 12 }), fc.integer({ min: 1, max: 1e9 }), (log2, seed) => {
        const n = 2 ** log2;
        let s = seed;
        const x = Array.from(
          { length: n },
          () => ((s = (s * 1103515245 + 12345) % 2 ** 31) / 2 ** 31) * 2 - 1,
        );
        const ref = reference(x);
        const re = Float64Array.from(x);
        const im = new Float64Array(n);
        fft(re, im);
        let worst = 0;
        for (let k = 0; k < n; k++)
          worst = Math.max(worst, Math.abs(re[k] - ref[2 * k]), Math.abs(im[k] - ref[2 * k + 1]));
        expect(worst).toBeLessThan(1e-9);
        const k = seed % n;
        const [dr, di] = dftBin(x, k);
        expect(dr).toBeCloseTo(ref[2 * k], 8);
        expect(di).toBeCloseTo(ref[2 * k + 1], 8);
      }),
      { numRuns: 30 },
    );
  });

  it('gives the THD of a wave with 5th and 7th harmonics as fft.js does and as √(a5² + a7²)', () => {
    const n = 2048;
    const cycles = 8;
    const x = Array.from({ length: n }, (_, i) => {
      const a = (2 * Math.PI * cycles * i) / n;
      return 3 * Math.sin(a) + 0.12 * Math.sin(5 * a + 0.3) + 0.06 * Math.sin(7 * a);
    });
    const ours = harmonicAmplitudes(x, cycles, 15);
    const ref = reference(x);
    const refAmp = (h: number) => (2 * Math.hypot(ref[2 * h * cycles], ref[2 * h * cycles + 1])) / n;
    for (let h = 1; h <= 15; h++) expect(ours[h]).toBeCloseTo(refAmp(h), 10);
    expect(thdPct(ours)).toBeCloseTo((100 * Math.hypot(0.12, 0.06)) / 3, 8);
    // A length that is not a power of two takes the direct DFT and agrees.
    const odd = x.slice(0, 1536);
    expect(harmonicAmplitudes(odd, 6, 15)[1]).toBeCloseTo(3, 10);
  });
});
