import { describe, expect, it } from 'vitest';
import { deriveHallLayout, hallStateAt, nominalEdgeDeg } from './hall-layout';
import { debounceHallEdges, walkHallStates } from './hall-edges';

describe('hall layout', () => {
  it('derives the six 120° states 101, 100, 110, 010, 011, 001 in forward order', () => {
    // Domain contract: 120° layouts have these six states and never 000/111.
    const layout = deriveHallLayout({ A: 0, B: 120, C: 240 });
    const i = layout.states.indexOf('101');
    const rotated = [...layout.states.slice(i), ...layout.states.slice(0, i)];
    expect(rotated).toEqual(['101', '100', '110', '010', '011', '001']);
    // Common practice, no source: 120° hall spacing gives six 60° sectors.
    expect(layout.minGapDeg).toBeCloseTo(60, 12);
  });

  it('derives a 60° layout with 000 and 111 among its states and no 010 or 101', () => {
    const layout = deriveHallLayout({ A: 0, B: 60, C: 120 });
    expect(new Set(layout.states)).toEqual(new Set(['100', '110', '111', '011', '001', '000']));
    expect(layout.states).not.toContain('010');
  });

  it('follows the recipe whatever the sensors are called', () => {
    const layout = deriveHallLayout({ A: 240, B: 0, C: 120 });
    for (let k = 0; k < 6; k++) {
      const mid = (layout.boundaries[k].angleDeg + 30) % 360;
      expect(layout.states[k]).toBe(hallStateAt(mid, { A: 240, B: 0, C: 120 }));
    }
    expect(new Set(layout.states).size).toBe(6);
  });

  it('places a sensor’s rise at its rise angle forward and 180° later in reverse', () => {
    const rise = { A: 30, B: 150, C: 270 };
    expect(nominalEdgeDeg(rise, 'B', 'rise', 'forward')).toBe(150);
    expect(nominalEdgeDeg(rise, 'B', 'fall', 'forward')).toBe(330);
    expect(nominalEdgeDeg(rise, 'B', 'rise', 'reverse')).toBe(330);
    expect(nominalEdgeDeg(rise, 'B', 'fall', 'reverse')).toBe(150);
  });
});

describe('hall edges', () => {
  it('keeps the first edge of a bounce burst and drops glitches that return to the old level', () => {
    const out = debounceHallEdges(
      [
        { sensor: 'A', edge: 'rise', us: 100 },
        { sensor: 'A', edge: 'fall', us: 100.3 },
        { sensor: 'A', edge: 'rise', us: 100.5 },
        { sensor: 'B', edge: 'rise', us: 150 },
        { sensor: 'A', edge: 'fall', us: 200 },
        { sensor: 'A', edge: 'rise', us: 200.2 },
      ],
      1,
    );
    expect(out.edges).toEqual([
      { sensor: 'A', edge: 'rise', us: 100 },
      { sensor: 'B', edge: 'rise', us: 150 },
    ]);
    expect(out.bounce).toEqual({ A: 4, B: 0, C: 0 });
  });

  it('reports states a layout never produces and the direction the states step in', () => {
    const layout = deriveHallLayout({ A: 0, B: 120, C: 240 });
    // Forward from θ = 10°: C falls at 60°, B rises at 120°, A falls at 180°, C rises at 240°.
    const edges = [
      { sensor: 'C', edge: 'fall', us: 1 },
      { sensor: 'B', edge: 'rise', us: 2 },
      { sensor: 'A', edge: 'fall', us: 3 },
      { sensor: 'C', edge: 'rise', us: 4 },
    ] as const;
    expect(walkHallStates([...edges], layout)).toEqual({
      invalidStates: [],
      direction: 1,
      silentSensors: [],
    });
    const bad = [
      ...edges,
      { sensor: 'A', edge: 'rise', us: 5 } as const,
      { sensor: 'B', edge: 'fall', us: 6 } as const,
    ];
    expect(walkHallStates(bad, layout).invalidStates).toEqual(['111']);
  });
});
