import { clarke, park, sixStepVectors } from './clarke-park';
import { wrapDeg360 } from './angles';

/**
 * What a hall offset costs a drive. Field-oriented control at angle error δ keeps cos δ of the torque per
 * amp and pushes sin δ of the current into the d-axis. Six-step (block) commutation applies one of six
 * two-phase current vectors per hall sector; torque is the Park q-component of that vector at the rotor
 * angle, so the sector boundaries decide the ripple.
 */

const RAD = Math.PI / 180;

export interface SixStepFigures {
  /** (max − min) / mean torque over a turn, %. */
  ripplePct: number;
  /** Mean torque for a unit conduction current (the q-axis current average). */
  meanTorque: number;
}

/** Torque-optimal six-step boundaries: the best two-phase vector changes where θ = 30° + k·60°. */
export const IDEAL_SIX_STEP_BOUNDARIES_DEG: readonly number[] = [30, 90, 150, 210, 270, 330];

/**
 * Six-step torque over one electrical turn for sectors that switch at `boundaryDeg` (six angles in
 * turning order; sector k runs from boundary k to k+1). Sector k drives the vector that is best for the
 * ideal sector k; the torque (Park q-current for a unit conduction current) is evaluated exactly per
 * sector: extremes at the ends or at the sinusoid's peak, mean by integration.
 */
export function sixStepTorque(boundaryDeg: readonly number[]): SixStepFigures {
  const vectors = sixStepVectors().map((v) => {
    const ab = clarke(v.currents.a, v.currents.b, v.currents.c);
    return { alpha: ab.alpha, beta: ab.beta, angleDeg: v.angleDeg, magnitude: v.magnitude };
  });
  const nb = boundaryDeg.length;
  const assigned = IDEAL_SIX_STEP_BOUNDARIES_DEG.map((a) => {
    const centre = a + 30;
    let best = vectors[0];
    let bestScore = -Infinity;
    for (const v of vectors) {
      const score = Math.cos((v.angleDeg - centre - 90) * RAD);
      if (score > bestScore) {
        bestScore = score;
        best = v;
      }
    }
    return best;
  });
  let max = -Infinity;
  let min = Infinity;
  let integral = 0;
  for (let k = 0; k < nb; k++) {
    const a = boundaryDeg[k];
    const width = wrapDeg360(boundaryDeg[(k + 1) % nb] - a);
    const b = a + width;
    const v = assigned[k];
    const q = (th: number) => park(v.alpha, v.beta, th).q;
    for (const th of [a, b]) {
      const tq = q(th);
      if (tq > max) max = tq;
      if (tq < min) min = tq;
    }
    // q(θ) = |v|·sin(φ − θ): peak +|v| at θ = φ − 90°, trough −|v| at θ = φ + 90°.
    if (wrapDeg360(v.angleDeg - 90 - a) < width) max = Math.max(max, v.magnitude);
    if (wrapDeg360(v.angleDeg + 90 - a) < width) min = Math.min(min, -v.magnitude);
    integral += (v.magnitude * (Math.cos((v.angleDeg - b) * RAD) - Math.cos((v.angleDeg - a) * RAD))) / RAD;
  }
  const meanTorque = integral / 360;
  return { ripplePct: (100 * (max - min)) / Math.abs(meanTorque), meanTorque };
}
