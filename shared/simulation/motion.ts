/**
 * Rotor motion for the simulator: electrical angle travelled Φ(t) ≥ 0 since segment start and the speed
 * ω(t) = dΦ/dt, in electrical degrees and microseconds. Written independently of the engine's fit.
 */

export type MotionProfile =
  | { kind: 'constant'; speedRpm: number }
  /** Free coast-down: speed decays exponentially from startRpm to endRpm over the segment. */
  | { kind: 'coast'; startRpm: number; endRpm: number }
  /** Constant acceleration from startRpm to endRpm over the segment. */
  | { kind: 'ramp'; startRpm: number; endRpm: number };

export interface Motion {
  /** Segment duration, µs. */
  durationUs: number;
  /** Electrical angle travelled at t µs after segment start, degrees (≥ 0). */
  travelled(tUs: number): number;
  /** Speed at t, electrical degrees per µs (> 0). */
  speed(tUs: number): number;
  /** Inverse of travelled(): the time at which `deg` has been travelled. */
  timeAt(deg: number): number;
}

const degPerUs = (rpm: number, polePairs: number) => (rpm * polePairs * 360) / 60 / 1e6;

export function buildMotion(profile: MotionProfile, polePairs: number, electricalTurns: number): Motion {
  const total = electricalTurns * 360;
  let travelled: (t: number) => number;
  let speed: (t: number) => number;
  let durationUs: number;
  if (profile.kind === 'constant') {
    const w = degPerUs(profile.speedRpm, polePairs);
    durationUs = total / w;
    travelled = (t) => w * t;
    speed = () => w;
  } else if (profile.kind === 'ramp') {
    const w0 = degPerUs(profile.startRpm, polePairs);
    const w1 = degPerUs(profile.endRpm, polePairs);
    durationUs = (2 * total) / (w0 + w1);
    const acc = (w1 - w0) / durationUs;
    travelled = (t) => w0 * t + 0.5 * acc * t * t;
    speed = (t) => w0 + acc * t;
  } else {
    const w0 = degPerUs(profile.startRpm, polePairs);
    const w1 = degPerUs(profile.endRpm, polePairs);
    const tau = total / (w0 - w1);
    durationUs = tau * Math.log(w0 / w1);
    travelled = (t) => w0 * tau * -Math.expm1(-t / tau);
    speed = (t) => w0 * Math.exp(-t / tau);
  }
  // Newton's method on a monotone function, safeguarded by bisection; converges to < 1e-9 µs.
  const timeAt = (deg: number): number => {
    let lo = 0;
    let hi = durationUs * 1.5 + 1;
    let t = Math.min(hi, Math.max(lo, (deg / total) * durationUs));
    for (let i = 0; i < 100; i++) {
      const f = travelled(t) - deg;
      if (f > 0) hi = t;
      else lo = t;
      let next = t - f / speed(t);
      if (!(next > lo && next < hi)) next = (lo + hi) / 2;
      if (Math.abs(next - t) < 1e-10 * Math.max(1, t)) return next;
      t = next;
    }
    return t;
  };
  return { durationUs, travelled, speed, timeAt };
}
