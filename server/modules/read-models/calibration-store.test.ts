import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { closeDeep } from '#tests/harness/close-deep';
import { seedDemoLine } from '../demo/demo-line.seed';
import { OFF_HALL_BOARD_LOT } from '../demo/demo-line.scenario';
import { analysisFilterSchema, type AnalysisFilter, type CompareBy } from '#shared/schemas/analysis';
import {
  comparisonAggregate,
  distributionAggregate,
  groupRankSums,
  newestFigures,
} from './calibration-aggregates.repository';
import {
  groupsOf,
  orderStatistics,
  percentiles,
  quantileSorted,
  sortedPlaces,
} from './calibration-store.figures';
import { fitted, Partition as PartitionClass, type Partition, type Selection } from './calibration-store';

// The views answer from the rows kept in memory when they read through the pool, and from one SQL statement
// inside a transaction: two implementations of the same figures. These tests hold them equal on the demo
// line (to 1e-9 relative: sums are added in another order), and check that the memory catches up with
// every kind of change the table sees.

const NOW = new Date('2026-11-19T09:30:00Z');
let t: TestApp;
let modelId: string;

beforeAll(async () => {
  t = await createTestApp();
  await seedDemoLine(t.deps, { units: 300, now: NOW });
  const { rows } = await t.deps.pool.query<{ id: string }>(`select id from models where code = 'CV-57B'`);
  modelId = rows[0].id;
}, 120_000);

afterAll(async () => {
  await t?.close();
});

const filter = (extra: Record<string, unknown> = {}): AnalysisFilter =>
  analysisFilterSchema.parse({ model: modelId, ...extra });
/** The SQL path: the same call inside a transaction. */
const inSql = <T>(read: (db: typeof t.deps.db) => Promise<T>) =>
  t.deps.db.transaction((tx) => read(tx as unknown as typeof t.deps.db));

describe('the rows kept in memory give the figures the SQL statements give', () => {
  const filters: Record<string, unknown>[] = [
    {},
    { hallBoardLots: OFF_HALL_BOARD_LOT },
    { attempts: 'first', verdict: 'pass' },
    { figure: 'lagDeg' },
    { figure: 'placementCDeg', verdict: 'fail' },
    { from: '2026-11-10T00:00:00Z', to: '2026-11-12T06:00:00Z' },
  ];
  for (const extra of filters)
    it(`distribution when the filter is ${JSON.stringify(extra)}`, async () => {
      const f = filter(extra);
      const extent = { lsl: -10, usl: 10 };
      const memory = await distributionAggregate(t.deps.db, f, extent);
      const sql = await inSql((db) => distributionAggregate(db, f, extent));
      expect(memory.n).toBeGreaterThan(0);
      closeDeep(memory, sql);
    });

  const bys: CompareBy[] = [
    'station',
    'hallBoardLot',
    'magnetRingLot',
    'statorLot',
    'operator',
    'recipeVersion',
  ];
  for (const by of bys)
    it(`comparison and rank sums by ${by}`, async () => {
      const f = filter();
      const byKey = <G extends { key: string | null; newest: number[] }>(gs: G[]) =>
        [...gs]
          .sort((a, b) => (a.key ?? '').localeCompare(b.key ?? ''))
          // The SQL path hands each group's newest values in no particular order.
          .map((g) => ({ ...g, newest: [...g.newest].sort((x, y) => x - y) }));
      const memory = byKey(await comparisonAggregate(t.deps.db, f, by));
      const sql = byKey(await inSql((db) => comparisonAggregate(db, f, by)));
      expect(memory.length).toBeGreaterThan(0);
      closeDeep(memory, sql);
      const ranksMemory = await groupRankSums(t.deps.db, f, by);
      const ranksSql = await inSql((db) => groupRankSums(db, f, by));
      closeDeep(Object.fromEntries(ranksMemory.rankSums), Object.fromEntries(ranksSql.rankSums));
      closeDeep(ranksMemory.ties, ranksSql.ties);
    });

  it('the newest points of one station, within a window, and the count of all', async () => {
    const { rows } = await t.deps.pool.query<{ id: string }>(`select id from stations order by name limit 1`);
    const f = filter({ stations: rows[0].id });
    const opts = { limit: 40, from: new Date('2026-11-06T00:00:00Z'), to: new Date('2026-11-15T00:00:00Z') };
    const memory = await newestFigures(t.deps.db, f, opts);
    const sql = await inSql((db) => newestFigures(db, f, opts));
    expect(memory.rows.length).toBe(40);
    expect(memory.total).toBe(sql.total);
    expect(memory.rows).toEqual(sql.rows);
  });
});

/** Copies `count` station calibrations of the model as recomputations under a new engine version. */
async function recompute(
  client: { query: (q: string, v: unknown[]) => Promise<unknown> },
  tag: string,
  count: number,
) {
  await client.query(
    `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                               offset_deg, offset_counts, attempt, result, compute_ms)
     select c.measurement_pk, c.recipe_id, c.unit_id, c.station_id, $1, c.verdict, 'recompute', c.offset_deg,
            c.offset_counts, null, c.result, 1
     from calibrations c join units u on u.id = c.unit_id
     where c.purpose = 'station' and c.verdict in ('pass', 'fail') and u.model_id = $2
     order by c.computed_at limit $3`,
    [tag, modelId, count],
  );
}

describe('the memory catches up with what changed since it last looked', () => {
  const recomputed = () => filter({ purpose: 'recompute' });

  it('calibrations committed since then are in the next view', async () => {
    const before = (await distributionAggregate(t.deps.db, recomputed(), null)).n;
    await recompute(t.deps.pool, 'store-a', 25);
    const after = await distributionAggregate(t.deps.db, recomputed(), null);
    expect(after.n).toBe(before + 25);
    closeDeep(after, await inSql((db) => distributionAggregate(db, recomputed(), null)));
  });

  it('a transaction still open when it last looked is seen once it commits', async () => {
    const open = await t.deps.pool.connect();
    try {
      const before = (await distributionAggregate(t.deps.db, recomputed(), null)).n;
      await open.query('begin');
      await recompute(open, 'store-b', 7);
      // The store looks while the insert is in flight: not there yet.
      expect((await distributionAggregate(t.deps.db, recomputed(), null)).n).toBe(before);
      // A later transaction commits first and is seen.
      await recompute(t.deps.pool, 'store-c', 3);
      expect((await distributionAggregate(t.deps.db, recomputed(), null)).n).toBe(before + 3);
      await open.query('commit');
      expect((await distributionAggregate(t.deps.db, recomputed(), null)).n).toBe(before + 10);
    } finally {
      open.release();
    }
  });

  it("a corrected lot moves the unit's calibrations to the corrected lot's group", async () => {
    const { rows } = await t.deps.pool.query<{ id: string; lot: string }>(
      `select u.id, u.hall_board_lot as lot from units u join calibrations c on c.unit_id = u.id
       where u.model_id = $1 and c.purpose = 'station' and c.verdict in ('pass', 'fail')
       order by u.serial limit 1`,
      [modelId],
    );
    const lotsBefore = await comparisonAggregate(t.deps.db, filter(), 'hallBoardLot');
    expect(lotsBefore.some((g) => g.key === 'HB-CORRECTED')).toBe(false);
    await t.database
      .ownerPool()
      .query(`update units set hall_board_lot = 'HB-CORRECTED' where id = $1`, [rows[0].id]);
    const lotsAfter = await comparisonAggregate(t.deps.db, filter(), 'hallBoardLot');
    const moved = lotsAfter.find((g) => g.key === 'HB-CORRECTED');
    expect(moved?.n).toBeGreaterThan(0);
    const was = (lots: typeof lotsAfter) => lots.find((g) => g.key === rows[0].lot)?.n ?? 0;
    expect(was(lotsAfter)).toBe(was(lotsBefore) - moved!.n);
    closeDeep(
      Object.fromEntries(lotsAfter.map((g) => [g.key, g.n])),
      Object.fromEntries(
        (await inSql((db) => comparisonAggregate(db, filter(), 'hallBoardLot'))).map((g) => [g.key, g.n]),
      ),
    );
  });

  it("a unit moved to another model takes its calibrations out of the first model's figures", async () => {
    const { rows } = await t.deps.pool.query<{ id: string; other: string }>(
      `select u.id, (select id from models where id <> $1 order by code limit 1) as other
       from units u join calibrations c on c.unit_id = u.id
       where u.model_id = $1 and c.purpose = 'station' and c.verdict in ('pass', 'fail')
       order by u.serial desc limit 1`,
      [modelId],
    );
    const before = (await distributionAggregate(t.deps.db, filter(), null)).n;
    const { rows: counted } = await t.deps.pool.query<{ n: number }>(
      `select count(*)::int as n from calibration_stats
       where unit_id = $1 and purpose = 'station' and verdict in ('pass', 'fail') and offset_deg is not null`,
      [rows[0].id],
    );
    expect(counted[0].n).toBeGreaterThan(0);
    await t.database
      .ownerPool()
      .query(`update units set model_id = $2 where id = $1`, [rows[0].id, rows[0].other]);
    const after = (await distributionAggregate(t.deps.db, filter(), null)).n;
    expect(after).toBe(before - counted[0].n);
    expect(after).toBe((await inSql((db) => distributionAggregate(db, filter(), null))).n);
  });

  it('calibrations computed before ones already seen take their place in production order, however many looks a view skipped', async () => {
    const f = recomputed();
    const oneStation = async () =>
      filter({
        purpose: 'recompute',
        stations: (await t.deps.pool.query<{ id: string }>(`select id from stations order by name limit 1`))
          .rows[0].id,
      });
    await distributionAggregate(t.deps.db, f, null);
    await comparisonAggregate(t.deps.db, f, 'station');
    await newestFigures(t.deps.db, await oneStation(), { limit: 30 });
    for (let round = 0; round < 3; round++) {
      // Recomputations stamped a millisecond after station results spread over the fortnight: between rows
      // the store already holds, with values of their own.
      await t.deps.pool.query(
        `insert into calibrations (measurement_pk, recipe_id, unit_id, station_id, engine_version, verdict, purpose,
                                   offset_deg, offset_counts, attempt, result, compute_ms, computed_at)
         select c.measurement_pk, c.recipe_id, c.unit_id, c.station_id, $1, c.verdict, 'recompute',
                c.offset_deg + 0.37 * ($2::int + 1), c.offset_counts, null, c.result, 1,
                c.computed_at + interval '1 millisecond'
         from calibrations c join units u on u.id = c.unit_id
         where c.purpose = 'station' and c.verdict in ('pass', 'fail') and u.model_id = $3
         order by c.computed_at offset 11 * $2::int limit 9`,
        [`store-mid-${round}`, round, modelId],
      );
      // Only the distribution looks between the rounds; the others take in three changes at once.
      closeDeep(
        await distributionAggregate(t.deps.db, f, null),
        await inSql((db) => distributionAggregate(db, f, null)),
      );
    }
    const byKey = <G extends { key: string | null; newest: number[] }>(gs: G[]) =>
      [...gs]
        .sort((a, b) => (a.key ?? '').localeCompare(b.key ?? ''))
        .map((g) => ({ ...g, newest: [...g.newest].sort((x, y) => x - y) }));
    closeDeep(
      byKey(await comparisonAggregate(t.deps.db, f, 'station')),
      byKey(await inSql((db) => comparisonAggregate(db, f, 'station'))),
    );
    const ranks = await groupRankSums(t.deps.db, f, 'hallBoardLot');
    const ranksSql = await inSql((db) => groupRankSums(db, f, 'hallBoardLot'));
    closeDeep(Object.fromEntries(ranks.rankSums), Object.fromEntries(ranksSql.rankSums));
    closeDeep(ranks.ties, ranksSql.ties);
    const station = await oneStation();
    const memory = await newestFigures(t.deps.db, station, { limit: 30 });
    const sql = await inSql((db) => newestFigures(db, station, { limit: 30 }));
    expect(memory.total).toBe(sql.total);
    expect(memory.rows).toEqual(sql.rows);
  });
});

const scratch = () => ({ values: new Float64Array(0), tag: new Uint16Array(0) });

/** A selection of the given rows of a column of values (a partition of that many rows). */
const selectionOf = (values: number[], at = values.map((_, i) => i)): Selection => ({
  part: { length: values.length } as Partition,
  values: Float64Array.from(values),
  at: Int32Array.from(at),
  n: at.length,
});

describe('order statistics along the sorted order, without sorting each view', () => {
  it('quantiles along the sorted order equal those of the sorted values, ties, gaps and all', () => {
    // Common practice, no source: percentile_cont's rule, checked against a plain sort.
    const values = Float64Array.from({ length: 1001 }, (_, i) =>
      i % 13 === 5 ? NaN : Math.round(Math.sin(i * 7.3) * 20) / 4,
    );
    const sorted = sortedPlaces(values, values.length);
    const present = values.filter((v) => !Number.isNaN(v));
    expect(sorted.n).toBe(present.length);
    const ps = [0.25, 0.5, 0.75];
    const all = Float64Array.from(present).sort();
    expect(percentiles(all.length, ps, (ks) => orderStatistics(sorted, null, ks))).toEqual(
      ps.map((p) => quantileSorted(all, p)),
    );
    // Every third row selected.
    const mask = Uint8Array.from(values, (v, i) => (i % 3 === 0 && !Number.isNaN(v) ? 1 : 0));
    const some = Float64Array.from(values.filter((_, i) => mask[i] === 1)).sort();
    expect(percentiles(some.length, ps, (ks) => orderStatistics(sorted, mask, ks))).toEqual(
      ps.map((p) => quantileSorted(some, p)),
    );
    const four = Float64Array.of(3, 1, 2, 4);
    expect(percentiles(4, ps, (ks) => orderStatistics(sortedPlaces(four, 4), null, ks))).toEqual([
      1.75, 2.5, 3.25,
    ]);
  });

  it('rank sums of one group holding a tie of three, among others, average the ranks the tie spans', () => {
    // Common practice, no source (worked by hand): a = [1, 2, 2, 2], b = [2, 4]: the four 2s span ranks 2–5
    // (average 3.5), so a = 1 + 3 × 3.5 = 11.5 and b = 3.5 + 6 = 9.5; Σ(t³ − t) = 64 − 4 = 60.
    const values = [2, 1, 4, 2, 2, 2];
    const group = Int32Array.of(1, 0, 1, 0, 0, 0);
    const sel = selectionOf(values);
    const g = groupsOf(sel, sortedPlaces(sel.values, values.length), group, 0, 10, scratch());
    expect(g.codes).toEqual([1, 0]);
    expect(Array.from(g.rankSums)).toEqual([9.5, 11.5]);
    expect(g.ties).toBe(60);
    expect(g.sorted.map((a) => Array.from(a))).toEqual([
      [2, 4],
      [1, 2, 2, 2],
    ]);
  });

  it('tie-averaged rank sums follow the textbook example, among the selected rows only', () => {
    // Common practice, no source (the definition worked by hand): a = [1, 3, 5], b = [2, 3, 6]; the two 3s
    // share ranks 3 and 4, so a ranks 1, 3.5, 5 and b 2, 3.5, 6; one tie of two values → Σ(t³ − t) = 6.
    // Rows 6 and 7 (a 3 and a 0) are not selected and take no rank.
    const values = [1, 2, 3, 3, 5, 6, 3, 0];
    const group = Int32Array.of(0, 1, 0, 1, 0, 1, 0, 1);
    const sel = selectionOf(values, [0, 1, 2, 3, 4, 5]);
    const g = groupsOf(sel, sortedPlaces(sel.values, values.length), group, 0, 10, scratch());
    expect(Array.from(g.rankSums)).toEqual([9.5, 11.5]);
    expect(g.ties).toBe(6);
  });

  it("each group's newest values come oldest first, at most as many as asked", () => {
    const values = [10, 20, 11, 21, 12, 13, 22];
    const group = Int32Array.of(0, 1, 0, 1, 0, 0, 1);
    const sel = selectionOf(values);
    const g = groupsOf(sel, sortedPlaces(sel.values, values.length), group, 0, 3, scratch());
    expect(g.newest.map((a) => Array.from(a))).toEqual([
      [11, 12, 13],
      [20, 21, 22],
    ]);
  });
});

describe('codes are kept in 16 bits until one needs more', () => {
  const row = (t: number, lot: number, recipeVersion: number) =>
    ({
      id: Uint32Array.of(0, 0, 0, t),
      t,
      model: '',
      purpose: '',
      station: 3,
      operator: -1,
      verdict: 1,
      attempt: 1,
      recipeVersion,
      hall: lot,
      magnet: -1,
      stator: 7,
      figures: null,
    }) as Parameters<Partition['append']>[0];

  it('a lot code past 32,767 widens its column to 32 bits and keeps every earlier code', () => {
    const part = new PartitionClass(4);
    part.append(row(1, 5, 2));
    part.append(row(2, -1, 2));
    expect(part.hall).toBeInstanceOf(Int16Array);
    part.append(row(3, 40_000, 70_000));
    expect(part.hall).toBeInstanceOf(Int32Array);
    expect(part.recipeVersion).toBeInstanceOf(Int32Array);
    expect(part.station).toBeInstanceOf(Int16Array);
    expect(Array.from(part.hall.subarray(0, 3))).toEqual([5, -1, 40_000]);
    expect(Array.from(part.recipeVersion.subarray(0, 3))).toEqual([2, 2, 70_000]);
    // Growing past the first capacity keeps the wider column's type.
    for (let k = 4; k < 2_000; k++) part.append(row(k, k, 2));
    expect(part.hall).toBeInstanceOf(Int32Array);
    expect(part.hall[2]).toBe(40_000);
    expect(part.length).toBe(1_999);
    expect(part.stator[1_998]).toBe(7);
  });

  it('a code that fits leaves the column as it is', () => {
    const column = new Int16Array(4);
    expect(fitted(column, 32_767)).toBe(column);
    expect(fitted(column, -1)).toBe(column);
    expect(fitted(column, 32_768)).toBeInstanceOf(Int32Array);
  });
});
