/**
 * Clarke and Park transforms in the product's convention (amplitude-invariant Clarke; θ in electrical
 * degrees, θ = 0 with the rotor d-axis on phase A):
 *   iα = ia,  iβ = (ib − ic)/√3
 *   id = iα·cosθ + iβ·sinθ,  iq = −iα·sinθ + iβ·cosθ
 * Balanced currents ia = −I·sinθ, ib = −I·sin(θ−120°), ic = −I·sin(θ+120°) give id = 0, iq = I.
 */

const RAD = Math.PI / 180;
const SQRT3 = Math.sqrt(3);

export interface AlphaBeta {
  alpha: number;
  beta: number;
}

export interface DirectQuadrature {
  d: number;
  q: number;
}

/** Amplitude-invariant Clarke transform of three phase quantities (a + b + c assumed 0). */
export function clarke(a: number, b: number, c: number): AlphaBeta {
  return { alpha: a, beta: (b - c) / SQRT3 };
}

/** Inverse amplitude-invariant Clarke transform (zero-sequence component 0). */
export function inverseClarke(alpha: number, beta: number): { a: number; b: number; c: number } {
  return { a: alpha, b: -alpha / 2 + (SQRT3 / 2) * beta, c: -alpha / 2 - (SQRT3 / 2) * beta };
}

/** Park transform: stationary α/β to the rotor frame at electrical angle thetaDeg. */
export function park(alpha: number, beta: number, thetaDeg: number): DirectQuadrature {
  const c = Math.cos(thetaDeg * RAD);
  const s = Math.sin(thetaDeg * RAD);
  return { d: alpha * c + beta * s, q: -alpha * s + beta * c };
}

/** Inverse Park transform: rotor-frame d/q at thetaDeg back to α/β. */
export function inversePark(d: number, q: number, thetaDeg: number): AlphaBeta {
  const c = Math.cos(thetaDeg * RAD);
  const s = Math.sin(thetaDeg * RAD);
  return { alpha: d * c - q * s, beta: d * s + q * c };
}

export interface TwoPhaseVector {
  /** Phase the current enters, e.g. "A" for A→B. */
  from: 'A' | 'B' | 'C';
  /** Phase it leaves by. */
  to: 'A' | 'B' | 'C';
  /** Phase currents for a conduction current of 1. */
  currents: { a: number; b: number; c: number };
  /** Angle of the stator current vector in the α/β plane, degrees in [0, 360). */
  angleDeg: number;
  /** Length of the stator current vector (2/√3 for a unit two-phase current). */
  magnitude: number;
}

const PAIRS: ReadonlyArray<['A' | 'B' | 'C', 'A' | 'B' | 'C']> = [
  ['A', 'B'],
  ['A', 'C'],
  ['B', 'C'],
  ['B', 'A'],
  ['C', 'A'],
  ['C', 'B'],
];

/** The six current vectors of six-step (two phases conducting) drive, unit conduction current. */
export function sixStepVectors(): TwoPhaseVector[] {
  return PAIRS.map(([from, to]) => {
    const cur = { a: 0, b: 0, c: 0 };
    const key = (p: 'A' | 'B' | 'C') => (p === 'A' ? 'a' : p === 'B' ? 'b' : 'c') as 'a' | 'b' | 'c';
    cur[key(from)] = 1;
    cur[key(to)] = -1;
    const ab = clarke(cur.a, cur.b, cur.c);
    let angle = Math.atan2(ab.beta, ab.alpha) / RAD;
    if (angle < 0) angle += 360;
    return {
      from,
      to,
      currents: cur,
      angleDeg: Math.round(angle * 1e9) / 1e9,
      magnitude: Math.hypot(ab.alpha, ab.beta),
    };
  });
}
