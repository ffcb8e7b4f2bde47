import type { HallEdge, HallSensor } from '../schemas/measurement';
import type { HallLayout } from './hall-layout';

/**
 * Hall edge clean-up and state tracking. Debouncing: edges of one sensor closer than `debounceUs` to the
 * previous one form a burst; the sensor changed state at the burst's first edge, so an odd burst keeps its
 * first edge and an even burst (a glitch that returns to the old level) is dropped entirely.
 */

export interface DebouncedEdges {
  /** Edges kept, all sensors, in time order. */
  edges: HallEdge[];
  /** Edges removed as bounce, per sensor. */
  bounce: Record<HallSensor, number>;
}

export function debounceHallEdges(edges: readonly HallEdge[], debounceUs: number): DebouncedEdges {
  const bounce: Record<HallSensor, number> = { A: 0, B: 0, C: 0 };
  const keep = new Uint8Array(edges.length);
  const bySensor: Record<HallSensor, number[]> = { A: [], B: [], C: [] };
  edges.forEach((e, i) => bySensor[e.sensor].push(i));
  for (const sensor of ['A', 'B', 'C'] as const) {
    const idx = bySensor[sensor];
    let i = 0;
    while (i < idx.length) {
      let j = i + 1;
      while (j < idx.length && edges[idx[j]].us - edges[idx[j - 1]].us < debounceUs) j++;
      const burst = j - i;
      if (burst % 2 === 1) keep[idx[i]] = 1;
      bounce[sensor] += burst % 2 === 1 ? burst - 1 : burst;
      i = j;
    }
  }
  return { edges: edges.filter((_, i) => keep[i] === 1), bounce };
}

export interface HallWalk {
  /** Invalid states entered, as "ABC" bit strings, each once. */
  invalidStates: string[];
  /** Direction shown by the state order: +1 forward, −1 reverse, 0 undecided. */
  direction: -1 | 0 | 1;
  /** Sensors that never switched (their level is unknown, so states are not judged). */
  silentSensors: HallSensor[];
}

/**
 * Replays the hall states from the edges. A sensor's level before its first edge is the opposite of
 * that edge. States are judged only when all three sensors switched.
 */
export function walkHallStates(edges: readonly HallEdge[], layout: HallLayout): HallWalk {
  const level: Record<HallSensor, number> = { A: -1, B: -1, C: -1 };
  for (const e of edges) if (level[e.sensor] === -1) level[e.sensor] = e.edge === 'rise' ? 0 : 1;
  const silentSensors = (['A', 'B', 'C'] as const).filter((s) => level[s] === -1);
  if (silentSensors.length > 0) return { invalidStates: [], direction: 0, silentSensors };
  // States as 3-bit numbers (A = 4, B = 2, C = 1); index −1 marks a state the layout never produces.
  const index = new Int8Array(8).fill(-1);
  layout.states.forEach((s, i) => (index[parseInt(s, 2)] = i));
  const invalid = new Set<number>();
  let fwd = 0;
  let rev = 0;
  const bit = { A: 4, B: 2, C: 1 } as const;
  let state = level.A * 4 + level.B * 2 + level.C;
  let prev = state;
  for (let i = 0; i < edges.length; i++) {
    const e = edges[i];
    state = e.edge === 'rise' ? state | bit[e.sensor] : state & ~bit[e.sensor];
    // Edges at the same instant change the state together.
    if (i + 1 < edges.length && edges[i + 1].us === e.us) continue;
    if (state === prev) continue;
    const a = index[prev];
    const b = index[state];
    if (b < 0) invalid.add(state);
    else if (a >= 0) {
      const step = (b - a + 6) % 6;
      if (step === 1) fwd++;
      else if (step === 5) rev++;
    }
    prev = state;
  }
  const total = fwd + rev;
  const direction = total >= 2 && fwd >= 0.8 * total ? 1 : total >= 2 && rev >= 0.8 * total ? -1 : 0;
  return {
    invalidStates: [...invalid].map((v) => v.toString(2).padStart(3, '0')).sort(),
    direction,
    silentSensors,
  };
}
