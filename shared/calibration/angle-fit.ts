import type { BemfChannel, BemfCrossing, EdgeKind } from '../schemas/measurement';

/**
 * Rotor angle θ(t) from back-EMF zero crossings. Each crossing has a known electrical angle (domain
 * crossing table, the same in both directions); after removing the detector delay the crossings are
 * unwrapped in the direction of motion and θ(t) is fitted locally with low-order polynomials over
 * neighbouring crossings, so coast-down and ramps cost no accuracy.
 */

/** Electrical angle (deg) of a zero crossing: domain crossing table (textbook machine theory, derived). */
export const CROSSING_ANGLE_DEG: Record<BemfChannel, Record<EdgeKind, number>> = {
  A: { rise: 180, fall: 0 },
  B: { rise: 300, fall: 120 },
  C: { rise: 60, fall: 240 },
  AB: { rise: 150, fall: 330 },
  BC: { rise: 270, fall: 90 },
  CA: { rise: 30, fall: 210 },
};

export interface AngleFitOptions {
  /** Polynomial degree of each local fit (1–3). */
  degree: number;
  /** Width of each local fit in electrical turns (at least `minPoints` crossings). */
  windowTurns: number;
  /** Replace the local fit by one straight line over the whole capture (naive baseline, benchmarks only). */
  globalLine?: boolean;
}

// Cubic over four turns: no measurable bias while coasting down (benchmark), and averaging the local fits
// over many edges still reaches the jitter bound.
export const DEFAULT_ANGLE_FIT: AngleFitOptions = { degree: 3, windowTurns: 4 };

/** Crossing angle by channel and edge without nested property lookups (hot path). */
export function crossingAngleDeg(c: BemfCrossing): number {
  const rise = c.edge === 'rise';
  switch (c.channel) {
    case 'A':
      return rise ? 180 : 0;
    case 'B':
      return rise ? 300 : 120;
    case 'C':
      return rise ? 60 : 240;
    case 'AB':
      return rise ? 150 : 330;
    case 'BC':
      return rise ? 270 : 90;
    default:
      return rise ? 30 : 210;
  }
}

/** Direction implied by the crossing order: +1 forward, −1 reverse, 0 when it cannot tell (e.g. one channel). */
export function crossingDirection(crossings: readonly BemfCrossing[]): -1 | 0 | 1 {
  let fwd = 0;
  let rev = 0;
  let prev = crossings.length > 0 ? crossingAngleDeg(crossings[0]) : 0;
  for (let k = 1; k < crossings.length; k++) {
    const a = crossingAngleDeg(crossings[k]);
    let f = a - prev;
    prev = a;
    // Table angles lie in [0, 360): one correction brings the difference into range.
    if (f < 0) f += 360;
    const r = f === 0 ? 360 : 360 - f;
    fwd += f === 0 ? 360 : f;
    rev += r;
  }
  if (fwd < 0.9 * rev) return 1;
  if (rev < 0.9 * fwd) return -1;
  return 0;
}

export interface UnwrappedTrack {
  /** Crossing times with the detector delay removed, µs. */
  tUs: Float64Array;
  /** Unwrapped angles, degrees; increasing forward, decreasing in reverse. */
  thetaDeg: Float64Array;
  /** Crossings dropped as duplicates (same angle again with no time to turn). */
  duplicates: number;
}

/**
 * Unwraps crossing angles in the direction `sign` (+1 forward, −1 reverse). Each step takes the smallest
 * positive advance unless the local speed says whole turns went by (missing crossings).
 */
export function unwrapCrossings(
  crossings: readonly BemfCrossing[],
  delayUs: number,
  sign: 1 | -1,
): UnwrappedTrack {
  const n = crossings.length;
  const tUs = new Float64Array(n);
  const thetaDeg = new Float64Array(n);
  const base = new Float64Array(n);
  for (let k = 0; k < n; k++) base[k] = crossingAngleDeg(crossings[k]);
  // A robust speed to start from: median of the smallest-advance rates (deg/µs) over the first steps.
  const rates: number[] = [];
  for (let k = 1; k < n && rates.length < 24; k++) {
    const dt = crossings[k].us - crossings[k - 1].us;
    const adv = (((sign * (base[k] - base[k - 1])) % 360) + 360) % 360;
    if (dt > 0 && adv > 0) rates.push(adv / dt);
  }
  rates.sort((a, b) => a - b);
  let rate = rates.length > 0 ? rates[rates.length >> 1] : 0;
  let m = 0;
  let duplicates = 0;
  tUs[0] = crossings[0].us - delayUs;
  thetaDeg[0] = base[0];
  let prevBase = base[0];
  const history = 6;
  for (let k = 1; k < n; k++) {
    const t = crossings[k].us - delayUs;
    const dt = t - tUs[m];
    // Advance from the previous accepted crossing to this one, modulo a turn.
    const adv0 = (((sign * (base[k] - prevBase)) % 360) + 360) % 360;
    let adv = adv0;
    if (rate > 0) {
      const predicted = rate * dt;
      const turns = Math.max(0, Math.round((predicted - adv0) / 360));
      adv = adv0 + 360 * turns;
    }
    if (adv === 0) {
      if (rate * dt < 180) {
        duplicates++;
        continue;
      }
      adv = 360;
    }
    m++;
    prevBase = base[k];
    tUs[m] = t;
    thetaDeg[m] = thetaDeg[m - 1] + sign * adv;
    const j = Math.max(0, m - history);
    if (tUs[m] > tUs[j]) rate = Math.abs(thetaDeg[m] - thetaDeg[j]) / (tUs[m] - tUs[j]);
  }
  return { tUs: tUs.subarray(0, m + 1), thetaDeg: thetaDeg.subarray(0, m + 1), duplicates };
}

/** A fitted θ(t): local polynomials anchored along the capture. */
export interface AngleFit {
  /** θ at time tUs (deg), or NaN outside the fitted span (± half a crossing spacing). */
  thetaAt(tUs: number): number;
  /** dθ/dt at tUs, deg/µs (signed). */
  rateAt(tUs: number): number;
  /** RMS residual of the crossings about the fit, degrees (corrected for the fitted parameters). */
  residualRmsDeg: number;
  /** Local rates at the anchors, deg/µs (signed). */
  anchorRates: Float64Array;
  startUs: number;
  endUs: number;
}

/** Solves the small symmetric system A x = b in place (Gaussian elimination, partial pivoting). */
function solveSmall(a: Float64Array, b: Float64Array, n: number): boolean {
  for (let col = 0; col < n; col++) {
    let piv = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(a[r * n + col]) > Math.abs(a[piv * n + col])) piv = r;
    if (Math.abs(a[piv * n + col]) < 1e-300) return false;
    if (piv !== col) {
      for (let c = 0; c < n; c++) {
        const tmp = a[col * n + c];
        a[col * n + c] = a[piv * n + c];
        a[piv * n + c] = tmp;
      }
      const tb = b[col];
      b[col] = b[piv];
      b[piv] = tb;
    }
    for (let r = col + 1; r < n; r++) {
      const f = a[r * n + col] / a[col * n + col];
      if (f === 0) continue;
      for (let c = col; c < n; c++) a[r * n + c] -= f * a[col * n + c];
      b[r] -= f * b[col];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r];
    for (let c = r + 1; c < n; c++) s -= a[r * n + c] * b[c];
    b[r] = s / a[r * n + r];
  }
  return true;
}

/**
 * Fits θ(t) locally. Anchors sit on crossings (every `stride`-th); each anchor fits a polynomial of
 * `degree` in normalised time to the `window` nearest crossings. A time is evaluated with the anchor
 * nearest to it, so every edge is judged by a fit centred on it.
 */
export function fitAngle(track: UnwrappedTrack, options: AngleFitOptions = DEFAULT_ANGLE_FIT): AngleFit {
  const t = track.tUs;
  const y = track.thetaDeg;
  const n = t.length;
  const spanTurns = Math.abs(y[n - 1] - y[0]) / 360;
  const perTurn = spanTurns > 0 ? (n - 1) / spanTurns : n;
  const degree = Math.max(1, Math.min(3, Math.floor(options.degree), n - 2));
  const p = degree + 1;
  const minPoints = Math.min(n, 3 * p + 2);
  const window = options.globalLine
    ? n
    : Math.max(minPoints, Math.min(n, Math.round(options.windowTurns * perTurn) | 1));
  // Anchors a few crossings apart: an edge is then at most stride/2 crossings off the centre of its
  // window, which costs nothing measurable while cutting the number of fits several-fold.
  const stride = options.globalLine ? n : Math.max(1, Math.round(window / 6));
  const useDegree = options.globalLine ? 1 : degree;
  const q = useDegree + 1;
  const anchors: number[] = [];
  for (let i = 0; i < n; i += stride) anchors.push(i);
  if (options.globalLine) anchors.length = 1;
  const na = anchors.length;
  const centre = new Float64Array(na);
  const scale = new Float64Array(na);
  const coef = new Float64Array(na * 4);
  const a = new Float64Array(q * q);
  const b = new Float64Array(q);
  const mom = new Float64Array(7);
  for (let k = 0; k < na; k++) {
    const c = options.globalLine ? n >> 1 : anchors[k];
    let start = c - (window >> 1);
    if (start < 0) start = 0;
    if (start + window > n) start = n - window;
    const tc = t[c];
    const s = Math.max(Math.abs(t[start] - tc), Math.abs(t[start + window - 1] - tc)) || 1;
    centre[k] = tc;
    scale[k] = s;
    const yc = y[c];
    // Power sums up to x⁶ and x³·v, unrolled (degree ≤ 3); lower degrees use a prefix of them.
    let m0 = 0,
      m1 = 0,
      m2 = 0,
      m3 = 0,
      m4 = 0,
      m5 = 0,
      m6 = 0;
    let b0 = 0,
      b1 = 0,
      b2 = 0,
      b3 = 0;
    const inv = 1 / s;
    for (let i = start; i < start + window; i++) {
      const x = (t[i] - tc) * inv;
      const v = y[i] - yc;
      const x2 = x * x;
      const x3 = x2 * x;
      m0 += 1;
      m1 += x;
      m2 += x2;
      m3 += x3;
      m4 += x2 * x2;
      m5 += x2 * x3;
      m6 += x3 * x3;
      b0 += v;
      b1 += x * v;
      b2 += x2 * v;
      b3 += x3 * v;
    }
    mom[0] = m0;
    mom[1] = m1;
    mom[2] = m2;
    mom[3] = m3;
    mom[4] = m4;
    mom[5] = m5;
    mom[6] = m6;
    b[0] = b0;
    if (q > 1) b[1] = b1;
    if (q > 2) b[2] = b2;
    if (q > 3) b[3] = b3;
    for (let r = 0; r < q; r++) for (let cc = 0; cc < q; cc++) a[r * q + cc] = mom[r + cc];
    if (!solveSmall(a, b, q)) b.fill(0);
    coef[k * 4] = b[0] + yc;
    for (let e = 1; e < 4; e++) coef[k * 4 + e] = e < q ? b[e] : 0;
  }
  // Anchor lookup: the anchor whose centre is nearest to the time asked for.
  // Queries usually come in time order: try the previous answer's neighbourhood before bisecting.
  let hint = 0;
  const nearest = (tu: number): number => {
    const k = hint;
    if (centre[k] <= tu && (k + 1 >= na || centre[k + 1] > tu)) {
      hint = k + 1 < na && centre[k + 1] - tu < tu - centre[k] ? k + 1 : k;
      return hint;
    }
    if (k + 1 < na && centre[k + 1] <= tu && (k + 2 >= na || centre[k + 2] > tu)) {
      hint = k + 2 < na && centre[k + 2] - tu < tu - centre[k + 1] ? k + 2 : k + 1;
      return hint;
    }
    let l = 0;
    let h = na - 1;
    while (h - l > 1) {
      const mid = (l + h) >> 1;
      if (centre[mid] <= tu) l = mid;
      else h = mid;
    }
    hint = Math.abs(centre[h] - tu) < Math.abs(tu - centre[l]) ? h : l;
    return hint;
  };
  const meanGap = n > 1 ? (t[n - 1] - t[0]) / (n - 1) : 0;
  const startUs = t[0] - meanGap / 2;
  const endUs = t[n - 1] + meanGap / 2;
  const thetaAt = (tu: number): number => {
    if (!(tu >= startUs && tu <= endUs)) return NaN;
    const k = nearest(tu);
    const x = (tu - centre[k]) / scale[k];
    return coef[k * 4] + x * (coef[k * 4 + 1] + x * (coef[k * 4 + 2] + x * coef[k * 4 + 3]));
  };
  const rateAt = (tu: number): number => {
    const k = nearest(tu);
    const x = (tu - centre[k]) / scale[k];
    return (coef[k * 4 + 1] + x * (2 * coef[k * 4 + 2] + 3 * x * coef[k * 4 + 3])) / scale[k];
  };
  let ss = 0;
  for (let i = 0, k = 0; i < n; i++) {
    while (k + 1 < na && Math.abs(centre[k + 1] - t[i]) < Math.abs(t[i] - centre[k])) k++;
    const x = (t[i] - centre[k]) / scale[k];
    const r = y[i] - (coef[k * 4] + x * (coef[k * 4 + 1] + x * (coef[k * 4 + 2] + x * coef[k * 4 + 3])));
    ss += r * r;
  }
  const dof = Math.max(1, n - (n * q) / Math.max(q, window));
  const anchorRates = new Float64Array(na);
  for (let k = 0; k < na; k++) anchorRates[k] = coef[k * 4 + 1] / scale[k];
  return { thetaAt, rateAt, residualRmsDeg: Math.sqrt(ss / dof), anchorRates, startUs, endUs };
}
