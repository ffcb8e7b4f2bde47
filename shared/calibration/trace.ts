import type { Measurement } from '../schemas/measurement';
import type { Recipe } from '../schemas/recipe';
import { wrapDeg180 } from './angles';
import { crossingDirection, fitAngle, unwrapCrossings, DEFAULT_ANGLE_FIT } from './angle-fit';
import { debounceHallEdges, walkHallStates } from './hall-edges';
import { deriveHallLayout, nominalEdgeDeg } from './hall-layout';

/** One hall edge as the engine judged it: when, the fitted angle there, and its single-edge offset. */
export interface TracedEdge {
  sensor: 'A' | 'B' | 'C';
  edge: 'rise' | 'fall';
  us: number;
  /** Fitted electrical angle at the edge, wrapped to [0, 360) °e; null outside the fitted span. */
  thetaDeg: number | null;
  /** Fitted angle minus the edge's nominal angle, wrapped to (−180, 180] °e; null outside the span. */
  offsetDeg: number | null;
}

export interface TracedSegment {
  direction: 'forward' | 'reverse';
  /** Back-EMF crossings with the detector delay removed: time (µs) and unwrapped angle (°e). */
  crossings: { channel: string; edge: 'rise' | 'fall'; us: number; thetaDeg: number }[];
  edges: TracedEdge[];
  /** RMS residual of the crossings about the fitted angle, °e. */
  fitResidualRmsDeg: number;
}

/**
 * The raw data behind a calibration, for people to look at: each segment's crossings on the time axis,
 * the angle fitted through them (the engine's own local fit, `fitAngle`), and every debounced hall edge
 * with the fitted angle at it and its offset from nominal. The engine averages these single-edge
 * offsets per edge type (circular mean); this shows each one. Throws like the engine on unusable input.
 */
export function traceMeasurement(m: Measurement, recipe: Recipe): TracedSegment[] {
  const layout = deriveHallLayout(recipe.hallRiseDeg);
  return m.segments.map((segment) => {
    const declared: 1 | -1 = segment.direction === 'forward' ? 1 : -1;
    const debounced = debounceHallEdges(segment.hallEdges, recipe.debounceUs);
    const hallDir = walkHallStates(debounced.edges, layout).direction;
    const bemfDir = crossingDirection(segment.bemfCrossings);
    // The same choice of direction as the engine: the way the rotor demonstrably turned.
    let sign: 1 | -1 = declared;
    if (hallDir !== 0 && (bemfDir === 0 || bemfDir === hallDir)) sign = hallDir;
    const track = unwrapCrossings(segment.bemfCrossings, recipe.bemfDelayUs, bemfDir !== 0 ? bemfDir : sign);
    const fit = fitAngle(track, DEFAULT_ANGLE_FIT);
    const direction = sign === 1 ? 'forward' : 'reverse';
    const sorted = [...segment.bemfCrossings].sort((a, b) => a.us - b.us);
    const crossings = Array.from(track.tUs, (us, i) => ({
      channel: sorted[i]?.channel ?? '',
      edge: sorted[i]?.edge ?? 'rise',
      us,
      thetaDeg: track.thetaDeg[i],
    }));
    const edges = debounced.edges.map((e) => {
      const theta = fit.thetaAt(e.us);
      const ok = !Number.isNaN(theta);
      return {
        sensor: e.sensor,
        edge: e.edge,
        us: e.us,
        thetaDeg: ok ? ((theta % 360) + 360) % 360 : null,
        offsetDeg: ok
          ? wrapDeg180(theta - nominalEdgeDeg(recipe.hallRiseDeg, e.sensor, e.edge, direction))
          : null,
      } satisfies TracedEdge;
    });
    return { direction, crossings, edges, fitResidualRmsDeg: fit.residualRmsDeg };
  });
}
