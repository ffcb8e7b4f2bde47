import { describe, expect, it } from 'vitest';
import { diffRecipes, formatRecipeValue, hallLayoutLabel, RECIPE_FIELDS, recipeValue } from './recipe-fields';
import { recipeSchema, type Recipe } from '../schemas/recipe';

const base: Recipe = {
  name: 'BL-57 24 V',
  polePairs: 4,
  hallRiseDeg: { A: 0, B: 120, C: 240 },
  bemfDelayUs: 1.5,
  debounceUs: 2,
  countsPerTurn: 65536,
  countsSigned: true,
  maxAttempts: 3,
  limits: { offsetDeg: [-15, 15], edgeResidualDeg: 4, speedRpm: [100, 20000], minElectricalRevs: 5 },
};

describe('recipe diff', () => {
  it('two equal recipes have no differences', () => {
    expect(diffRecipes(base, structuredClone(base))).toEqual([]);
  });

  it('lists each changed leaf once with label, unit, old and new value, in form order', () => {
    const next: Recipe = {
      ...base,
      bemfDelayUs: 2,
      hallRiseDeg: { ...base.hallRiseDeg, C: 241 },
      limits: { ...base.limits, offsetDeg: [-15, 10], fitResidualDeg: 1.2 },
    };
    expect(diffRecipes(base, next)).toEqual([
      { path: 'hallRiseDeg.C', label: 'Hall C rise angle', unit: '°e', before: 240, after: 241 },
      { path: 'bemfDelayUs', label: 'Zero-crossing detector delay', unit: 'µs', before: 1.5, after: 2 },
      { path: 'limits.offsetDeg.1', label: 'Offset window, highest', unit: '°e', before: 15, after: 10 },
      {
        path: 'limits.fitResidualDeg',
        label: 'Largest crossing fit residual',
        unit: '°e RMS',
        before: null,
        after: 1.2,
      },
    ]);
  });

  it('a field removed shows as "not set" on the new side', () => {
    const withKe: Recipe = { ...base, limits: { ...base.limits, keVPerKrpm: [3, 4] } };
    const changes = diffRecipes(withKe, base);
    expect(changes.map((c) => [c.path, c.before, c.after])).toEqual([
      ['limits.keVPerKrpm.0', 3, null],
      ['limits.keVPerKrpm.1', 4, null],
    ]);
    expect(formatRecipeValue(changes[0].after, changes[0].unit)).toBe('not set');
  });

  it('every leaf of a full recipe is described by exactly one field (no number without a unit or explanation)', () => {
    const full: Recipe = {
      ...base,
      limits: { ...base.limits, fitResidualDeg: 1, speedVariationPct: 5, keVPerKrpm: [3, 4] },
    };
    const leaves: string[] = [];
    const walk = (v: unknown, path: string) => {
      if (v !== null && typeof v === 'object') {
        for (const [k, x] of Object.entries(v)) walk(x, path ? `${path}.${k}` : k);
      } else leaves.push(path);
    };
    walk(recipeSchema.parse(full), '');
    expect(RECIPE_FIELDS.map((f) => f.path).sort()).toEqual(leaves.sort());
    for (const f of RECIPE_FIELDS) {
      expect(f.help.length).toBeGreaterThan(10);
      if (f.kind === 'number' || f.kind === 'integer') expect(f.unit).not.toBe('');
      expect(recipeValue(full, f.path)).not.toBeNull();
    }
  });
});

describe('hall layout label', () => {
  // Common practice, no source: 120° hall spacing gives six 60° sectors; 60° spacing is the other usual layout.
  it('names the spacing between the sensors', () => {
    expect(hallLayoutLabel({ A: 0, B: 120, C: 240 })).toBe('120° layout (A 0°, B 120°, C 240°)');
    expect(hallLayoutLabel({ A: 30, B: 90, C: 150 })).toBe('60° layout (A 30°, B 90°, C 150°)');
  });
});
