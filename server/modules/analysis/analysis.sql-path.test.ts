import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { closeDeep } from '#tests/harness/close-deep';
import { seedDemoLine } from '../demo/demo-line.seed';
import { OFF_HALL_BOARD_LOT } from '../demo/demo-line.scenario';
import {
  analysisFilterSchema,
  comparisonQuerySchema,
  type AnalysisFilter,
  type ComparisonQuery,
} from '#shared/schemas/analysis';
import {
  andersonDarling,
  capability,
  describe as describeValues,
  groupsBeyondThreshold,
  histogram,
  kruskalWallis,
  summarizeGroup,
  welchAnova,
} from '#shared/statistics';
import { selectCalibrationFigures } from '../read-models/calibration-figures.repository';
import { comparisonView, distributionView, figureLimits } from './analysis.service';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';

// The views aggregate inside PostgreSQL; the pure functions of shared/statistics compute the same figures from
// every value in Node. These tests read every value of the same selection, run the pure functions on them and
// hold the two paths equal (to 1e-9 relative: sums are added in another order).

const NOW = new Date('2026-11-19T09:30:00Z');
let t: TestApp;
let modelId: string;

beforeAll(async () => {
  t = await createTestApp();
  await seedDemoLine(t.deps, { units: 400, now: NOW });
  const { rows } = await t.deps.pool.query<{ id: string }>(`select id from models where code = 'CV-57B'`);
  modelId = rows[0].id;
}, 120_000);

afterAll(async () => {
  await t?.close();
});

async function valuesOf(filter: AnalysisFilter) {
  return (await selectCalibrationFigures(t.deps.db, filter)).rows;
}

describe('the database path of the distribution view equals the pure functions on every value', () => {
  const filters: Record<string, unknown>[] = [
    {},
    { hallBoardLots: OFF_HALL_BOARD_LOT },
    { attempts: 'first', verdict: 'pass' },
    { figure: 'lagDeg' },
    { figure: 'speedRpm' },
    { figure: 'placementBDeg' },
    { from: '2026-11-10T00:00:00Z', to: '2026-11-12T00:00:00Z' },
  ];
  for (const extra of filters)
    it(`when the filter is ${JSON.stringify(extra)}, every figure equals the pure one`, async () => {
      const filter = analysisFilterSchema.parse({ model: modelId, ...extra });
      const values = (await valuesOf(filter)).map((r) => r.value);
      expect(values.length).toBeGreaterThan(8);
      const view = await distributionView(t.deps.db, filter);
      const found = await findModelWithActiveRecipe(t.deps.db, modelId);
      const limits = figureLimits(filter.figure, found!.recipe?.body ?? null);
      const hasLimits = limits.lsl !== null || limits.usl !== null;
      const d = describeValues(values);
      expect(view.n).toBe(values.length);
      closeDeep(view.description, d);
      closeDeep(
        view.histogram,
        histogram(values, hasLimits ? { min: limits.lsl ?? d.min!, max: limits.usl ?? d.max! } : undefined),
      );
      const ad = andersonDarling(values)!;
      closeDeep(view.normality, {
        statistic: ad.statistic,
        adjusted: ad.adjusted,
        pValue: ad.pValue,
        n: ad.n,
      });
      const cap = hasLimits ? capability(values, limits) : null;
      if (cap) closeDeep(view.capability, cap);
      else expect(view.capability).toBeNull();
    });

  it('when nothing matches, there are no figures and a plain warning', async () => {
    const filter = analysisFilterSchema.parse({ model: modelId, hallBoardLots: 'NO-SUCH-LOT' });
    const view = await distributionView(t.deps.db, filter);
    expect(view.n).toBe(0);
    expect(view.histogram).toEqual([]);
    expect(view.capability).toBeNull();
    expect(view.warnings).toContain('No calibration matches the filter.');
  });
});

function groupOf(r: Awaited<ReturnType<typeof valuesOf>>[number], by: ComparisonQuery['by']) {
  switch (by) {
    case 'station':
      return r.stationId;
    case 'hallBoardLot':
      return r.hallBoardLot ?? '';
    case 'magnetRingLot':
      return r.magnetRingLot ?? '';
    case 'statorLot':
      return r.statorLot ?? '';
    case 'operator':
      return r.operatorId ?? '';
    case 'recipeVersion':
      return String(r.recipeVersion);
  }
}

describe('the database path of the comparison view equals the pure functions on every value', () => {
  const cases: Record<string, unknown>[] = [
    { by: 'station' },
    { by: 'hallBoardLot' },
    { by: 'operator' },
    { by: 'recipeVersion' },
    { by: 'statorLot', figure: 'speedRpm' },
    { by: 'magnetRingLot', attempts: 'first' },
  ];
  for (const extra of cases)
    it(`when comparing ${JSON.stringify(extra)}, groups, test and stand-outs equal the pure ones`, async () => {
      const q = comparisonQuerySchema.parse({ model: modelId, ...extra });
      const rows = await valuesOf(q);
      const groups = new Map<string, number[]>();
      for (const r of rows) {
        const k = groupOf(r, q.by);
        groups.set(k, [...(groups.get(k) ?? []), r.value]);
      }
      const view = await comparisonView(t.deps.db, q);
      expect(new Set(view.groups.map((g) => g.key))).toEqual(new Set(groups.keys()));
      for (const g of view.groups) {
        const { label: _label, ...summary } = g;
        closeDeep(summary, summarizeGroup(g.key, groups.get(g.key)!));
      }
      const lists = view.groups.map((g) => groups.get(g.key)!);
      const nonNormal = lists.some((l) => {
        const ad = andersonDarling(l);
        return ad !== null && ad.pValue < 0.05;
      });
      const test = nonNormal ? kruskalWallis(lists) : welchAnova(lists);
      if (test) {
        const { reason: _reason, ...figures } = view.test!;
        closeDeep(figures, test);
      } else expect(view.test).toBeNull();
      closeDeep(
        view.standOut.map(({ label: _l, ...d }) => d),
        groupsBeyondThreshold(
          view.groups.map((g) => ({ key: g.key, values: groups.get(g.key)! })),
          q.threshold,
        ),
      );
    });
});
