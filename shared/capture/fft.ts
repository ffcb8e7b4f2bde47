/**
 * In-place iterative radix-2 FFT (Cooley–Tukey, decimation in time) and a direct DFT for single bins.
 * Convention: X[k] = Σ x[n]·e^{−2πi·kn/N} (no scaling), the same as common FFT libraries.
 */

const twiddleCache = new Map<number, { cos: Float64Array; sin: Float64Array }>();

function twiddles(n: number) {
  let t = twiddleCache.get(n);
  if (!t) {
    const cos = new Float64Array(n / 2);
    const sin = new Float64Array(n / 2);
    for (let k = 0; k < n / 2; k++) {
      cos[k] = Math.cos((2 * Math.PI * k) / n);
      sin[k] = -Math.sin((2 * Math.PI * k) / n);
    }
    t = { cos, sin };
    twiddleCache.set(n, t);
  }
  return t;
}

/** Transforms re/im (length a power of two) in place. */
export function fft(re: Float64Array, im: Float64Array): void {
  const n = re.length;
  if (n !== im.length || n === 0 || (n & (n - 1)) !== 0)
    throw new RangeError('fft length must be a power of two');
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      let t = re[i];
      re[i] = re[j];
      re[j] = t;
      t = im[i];
      im[i] = im[j];
      im[j] = t;
    }
  }
  const { cos, sin } = twiddles(n);
  for (let size = 2; size <= n; size <<= 1) {
    const half = size >> 1;
    const step = n / size;
    for (let start = 0; start < n; start += size) {
      for (let k = 0; k < half; k++) {
        const wr = cos[k * step];
        const wi = sin[k * step];
        const a = start + k;
        const b = a + half;
        const xr = re[b] * wr - im[b] * wi;
        const xi = re[b] * wi + im[b] * wr;
        re[b] = re[a] - xr;
        im[b] = im[a] - xi;
        re[a] += xr;
        im[a] += xi;
      }
    }
  }
}

/** Direct DFT of a real sequence at one bin k: returns [re, im]. */
export function dftBin(x: ArrayLike<number>, k: number): [number, number] {
  const n = x.length;
  let re = 0;
  let im = 0;
  for (let i = 0; i < n; i++) {
    const a = (-2 * Math.PI * k * i) / n;
    re += x[i] * Math.cos(a);
    im += x[i] * Math.sin(a);
  }
  return [re, im];
}

/**
 * Amplitudes of harmonics 1…maxHarmonic of a real sequence holding a whole number of `cycles` of its
 * fundamental: amplitude = 2·|X[h·cycles]| / N (peak). Uses the FFT when N is a power of two.
 */
export function harmonicAmplitudes(x: ArrayLike<number>, cycles: number, maxHarmonic: number): Float64Array {
  const n = x.length;
  const out = new Float64Array(maxHarmonic + 1);
  if ((n & (n - 1)) === 0) {
    const re = Float64Array.from(x);
    const im = new Float64Array(n);
    fft(re, im);
    for (let h = 1; h <= maxHarmonic && h * cycles < n / 2; h++)
      out[h] = (2 * Math.hypot(re[h * cycles], im[h * cycles])) / n;
  } else {
    for (let h = 1; h <= maxHarmonic && h * cycles < n / 2; h++) {
      const [re, im] = dftBin(x, h * cycles);
      out[h] = (2 * Math.hypot(re, im)) / n;
    }
  }
  return out;
}

/** Total harmonic distortion, % of the fundamental: √(Σ_{h≥2} A_h²) / A_1. */
export function thdPct(amplitudes: ArrayLike<number>): number {
  let s = 0;
  for (let h = 2; h < amplitudes.length; h++) s += amplitudes[h] * amplitudes[h];
  return (100 * Math.sqrt(s)) / amplitudes[1];
}
