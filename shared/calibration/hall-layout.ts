import type { Direction, EdgeKind, HallSensor } from '../schemas/measurement';
import { wrapDeg360 } from './angles';

/**
 * Hall model (domain contract): sensor X is high while wrap(θ − riseX) ∈ [0°, 180°). Turning forward
 * it rises at riseX and falls at riseX + 180°; turning in reverse it rises at riseX + 180° and falls
 * at riseX. Valid states and their order come from the rise angles, never from a fixed table.
 */

export const SENSORS: readonly HallSensor[] = ['A', 'B', 'C'];

export interface HallBoundary {
  /** Angle in [0, 360) where the state changes. */
  angleDeg: number;
  sensor: HallSensor;
  /** The edge this boundary produces when turning forward. */
  forwardEdge: EdgeKind;
}

export interface HallLayout {
  riseDeg: Record<HallSensor, number>;
  /** The six boundaries in increasing angle. */
  boundaries: HallBoundary[];
  /** states[k] holds between boundaries[k] and boundaries[k+1], as an "ABC" bit string; forward order. */
  states: string[];
  /** Smallest gap between neighbouring boundaries, degrees. */
  minGapDeg: number;
}

/** Hall state as an "ABC" bit string at electrical angle θ for the given rise angles. */
export function hallStateAt(thetaDeg: number, riseDeg: Record<HallSensor, number>): string {
  return SENSORS.map((s) => (wrapDeg360(thetaDeg - riseDeg[s]) < 180 ? '1' : '0')).join('');
}

/** Derives the boundaries and the forward order of valid states from the nominal rise angles. */
export function deriveHallLayout(riseDeg: Record<HallSensor, number>): HallLayout {
  const boundaries: HallBoundary[] = [];
  for (const sensor of SENSORS) {
    boundaries.push({ angleDeg: wrapDeg360(riseDeg[sensor]), sensor, forwardEdge: 'rise' });
    boundaries.push({ angleDeg: wrapDeg360(riseDeg[sensor] + 180), sensor, forwardEdge: 'fall' });
  }
  boundaries.sort((x, y) => x.angleDeg - y.angleDeg);
  let minGapDeg = 360;
  const states: string[] = [];
  for (let k = 0; k < boundaries.length; k++) {
    const a = boundaries[k].angleDeg;
    const b = k + 1 < boundaries.length ? boundaries[k + 1].angleDeg : boundaries[0].angleDeg + 360;
    minGapDeg = Math.min(minGapDeg, b - a);
    states.push(hallStateAt((a + b) / 2, riseDeg));
  }
  return { riseDeg, boundaries, states, minGapDeg };
}

/** Nominal electrical angle of an edge of a sensor in the given direction of rotation, [0, 360). */
export function nominalEdgeDeg(
  riseDeg: Record<HallSensor, number>,
  sensor: HallSensor,
  edge: EdgeKind,
  direction: Direction,
): number {
  const atRise = (edge === 'rise') === (direction === 'forward');
  return wrapDeg360(riseDeg[sensor] + (atRise ? 0 : 180));
}
