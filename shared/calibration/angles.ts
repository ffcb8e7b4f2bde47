/**
 * Angle helpers in electrical degrees. Wrapping conventions used across the engine:
 * `wrapDeg180` → (−180, 180], `wrapDeg360` → [0, 360).
 */

const RAD = Math.PI / 180;

/** Wraps an angle in degrees to (−180, 180]. */
export function wrapDeg180(deg: number): number {
  let w = deg % 360;
  if (w <= -180) w += 360;
  else if (w > 180) w -= 360;
  return w === 0 ? 0 : w;
}

/** Wraps an angle in degrees to [0, 360). */
export function wrapDeg360(deg: number): number {
  const w = deg % 360;
  const r = w < 0 ? w + 360 : w;
  return r === 360 || r === 0 ? 0 : r;
}

export interface CircularSummary {
  /** Mean direction in degrees, (−180, 180]; null when the resultant vanishes (no preferred direction). */
  meanDeg: number | null;
  /** Mean resultant length R̄ in [0, 1]. */
  resultant: number;
  /** Circular standard deviation √(−2 ln R̄) in degrees (Mardia & Jupp, Directional Statistics, §2.3.4). */
  stdDeg: number;
}

/**
 * Circular mean of angles in degrees: the direction of Σ(cos, sin), optionally weighted.
 * Mardia & Jupp, Directional Statistics, §2.2.1. 350°, 10°, 20° → 6.705°, not the arithmetic 126.7°.
 */
export function circularSummary(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): CircularSummary {
  let c = 0;
  let s = 0;
  let wSum = 0;
  for (let i = 0; i < anglesDeg.length; i++) {
    const w = weights ? weights[i] : 1;
    const a = anglesDeg[i] * RAD;
    c += w * Math.cos(a);
    s += w * Math.sin(a);
    wSum += w;
  }
  if (wSum <= 0) return { meanDeg: null, resultant: 0, stdDeg: Infinity };
  const r = Math.hypot(c, s) / wSum;
  if (r < 1e-12) return { meanDeg: null, resultant: 0, stdDeg: Infinity };
  const rClamped = Math.min(1, r);
  return {
    meanDeg: wrapDeg180(Math.atan2(s, c) / RAD),
    resultant: rClamped,
    stdDeg: Math.sqrt(Math.max(0, -2 * Math.log(rClamped))) / RAD,
  };
}

/** Circular mean in degrees, (−180, 180]; null for an empty list or a vanishing resultant. */
export function circularMeanDeg(anglesDeg: ArrayLike<number>, weights?: ArrayLike<number>): number | null {
  return circularSummary(anglesDeg, weights).meanDeg;
}
