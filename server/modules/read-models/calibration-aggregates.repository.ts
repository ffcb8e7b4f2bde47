// Over ~350 lines on purpose: the whole-model aggregates (distribution, comparison, rank sums, newest points)
// share one selection over calibration_stats (`statsSelection`); apart, the filter would leave its users.
import { and, eq, gte, inArray, lt, sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { stations } from '../stations/stations.table';
import { users } from '../users/users.table';
import type { AnalysisFigure, AnalysisFilter, CompareBy } from '#shared/schemas/analysis';
import { calibrationStats } from '../calibrations/calibration-stats.table';
import { calibrationStoreOf, selectRows, type CalibrationStore, type Selection } from './calibration-store';
import { distributionOf, groupOf, groupsOf, sortedOrderOf } from './calibration-store.figures';

/**
 * Line statistics aggregated inside PostgreSQL: the views read sums, quantiles and counts instead of every
 * calibration, so a view over hundreds of thousands of calibrations moves a few kilobytes. They read
 * `calibration_stats`, the narrow copy of each calibration that PostgreSQL keeps beside it (migration 0021:
 * model, station, lots, recipe version, operator and every figure as a column), so a whole-model view reads
 * one narrow table with no join. Each figure here is computed the way the pure functions in
 * shared/statistics compute it from the values (the tests hold both paths equal on the same data, the values
 * read from the calibrations themselves); what needs every value in order (the Anderson–Darling test) gets a
 * bounded sample of the newest values, with its size.
 *
 * Read through a connection pool, each function answers from the rows kept in memory instead
 * (calibration-store.ts, decision 62): the same figures by the same rules, without reading, sorting and
 * windowing every row again for every request. Inside a transaction, the SQL answers.
 */

/** The newest values handed to the normality test: above this, the test sees only these. */
export const NORMALITY_SAMPLE = 5000;
/** Per group in a comparison. */
export const GROUP_NORMALITY_SAMPLE = 1000;
/** Outliers listed per group (as in the pure box figures). */
const MAX_OUTLIERS = 200;

const s = calibrationStats;

/** The column of each figure. */
function figureColumn(figure: AnalysisFigure) {
  switch (figure) {
    case 'offsetDeg':
      return s.offsetDeg;
    case 'lagDeg':
      return s.lagDeg;
    case 'speedRpm':
      return s.speedRpm;
    case 'fitResidualDeg':
      return s.fitResidualDeg;
    case 'keVPerKrpm':
      return s.keVPerKrpm;
    case 'placementADeg':
      return s.placementADeg;
    case 'placementBDeg':
      return s.placementBDeg;
    case 'placementCDeg':
      return s.placementCDeg;
  }
}

/** WHERE conditions of the filter on calibration_stats (the figure's value present). */
function statsConditions(f: AnalysisFilter): SQL[] {
  const value = figureColumn(f.figure);
  const out: (SQL | undefined)[] = [
    eq(s.modelId, f.model),
    eq(s.purpose, f.purpose),
    f.stations ? inArray(s.stationId, f.stations) : undefined,
    f.hallBoardLots ? inArray(s.hallBoardLot, f.hallBoardLots) : undefined,
    f.magnetRingLots ? inArray(s.magnetRingLot, f.magnetRingLots) : undefined,
    f.statorLots ? inArray(s.statorLot, f.statorLots) : undefined,
    f.recipeVersions ? inArray(s.recipeVersion, f.recipeVersions) : undefined,
    f.operators ? inArray(s.operatorId, f.operators) : undefined,
    f.from ? gte(s.computedAt, new Date(f.from)) : undefined,
    f.to ? lt(s.computedAt, new Date(f.to)) : undefined,
    f.verdict === 'all' ? inArray(s.verdict, ['pass', 'fail']) : eq(s.verdict, f.verdict),
    f.attempts === 'first' ? eq(s.attempt, 1) : undefined,
    sql`${value} is not null`,
  ];
  return out.filter((c): c is SQL => c !== undefined);
}

/** FROM … WHERE of the filtered calibrations, and the figure's column. */
export function statsSelection(f: AnalysisFilter, extra: SQL[] = []) {
  return {
    value: sql`${figureColumn(f.figure)}`,
    from: sql`from ${s} where ${and(...statsConditions(f), ...extra)}`,
  };
}

/**
 * Runs one statistics statement with room to sort in memory (the default 4 MB spills a few hundred thousand
 * values to disk, several times slower); the setting ends with the statement's transaction.
 */
async function inSortRoom(db: DbOrTx, query: SQL) {
  return db.transaction(async (tx) => {
    await tx.execute(sql`set local work_mem = '64MB'`);
    return tx.execute<Record<string, unknown>>(query);
  });
}

const num = (v: unknown): number | null => (v === null || v === undefined ? null : Number(v));

export interface DistributionAggregate {
  n: number;
  mean: number | null;
  /** Sums of squared and cubed deviations from the mean. */
  ss2: number | null;
  ss3: number | null;
  min: number | null;
  max: number | null;
  q1: number | null;
  median: number | null;
  q3: number | null;
  /** Sum of the absolute differences of consecutive values in production order (moving ranges). */
  movingRangeSum: number | null;
  /** Equal-width bins (Freedman–Diaconis, 5…80) from `lo` in steps of `step`; counts per bin index. */
  histogram: { lo: number; step: number; counts: number[] } | null;
  /** The newest values (at most NORMALITY_SAMPLE), for the normality test. */
  newest: number[];
}

/**
 * Everything the distribution view needs, in one statement. The histogram bins follow the same rule as
 * `histogram()` in shared/statistics: from min(LSL, min) to max(USL, max) when limits are given.
 */
export async function distributionAggregate(
  db: DbOrTx,
  filter: AnalysisFilter,
  extent: { lsl: number | null; usl: number | null } | null,
): Promise<DistributionAggregate> {
  const store = calibrationStoreOf(db);
  if (store) {
    const sel = await selectRows(store, filter);
    return distributionOf(sel, sortedOrderOf(sel.part, filter.figure), extent, NORMALITY_SAMPLE);
  }
  const { value, from } = statsSelection(filter);
  const useExtent = extent !== null;
  const lsl = extent?.lsl ?? null;
  const usl = extent?.usl ?? null;
  // One read of the selection in production order (along the model's time index): the moving ranges and
  // each value's place in that order come with it. Then one sort by value (quartiles) and one pass over
  // the read values for the histogram and the moments about the mean.
  const res = await inSortRoom(
    db,
    sql`
    with sel as materialized (
      select v, abs(v - lag(v) over w) as d, row_number() over w as rn from (
        select ${value} as v, ${s.computedAt} as t, ${s.calibrationId} as id ${from}
      ) f
      window w as (order by t, id)
    ),
    m as (
      select n, mean, mn, mx, mr, q[1] as q1, q[2] as q2, q[3] as q3 from (
        select count(*)::int as n, avg(v) as mean, min(v) as mn, max(v) as mx, sum(d) as mr,
          percentile_cont(array[0.25, 0.5, 0.75]) within group (order by v) as q
        from sel
      ) a
    ),
    ext as (
      select
        case when ${useExtent} then least(coalesce(${lsl}::float8, mn), mn) else mn end as lo,
        case when ${useExtent} then greatest(coalesce(${usl}::float8, mx), mx) else mx end as hi,
        n, q1, q3, mean
      from m where n > 0
    ),
    bw as (
      select lo, hi, mean,
        case when hi = lo then 1
          else greatest(5, least(80, ceil((hi - lo) / case when q3 - q1 > 0 then 2 * (q3 - q1) / cbrt(n)
                                                         else (hi - lo) / 10 end)))::int
        end as bins
      from ext
    ),
    hist as (
      select case when bw.hi > bw.lo then least(bw.bins - 1, floor((v - bw.lo) / ((bw.hi - bw.lo) / bw.bins)))::int
                  else 0 end as i,
        count(*)::int as c, sum((v - bw.mean) ^ 2) as s2, sum((v - bw.mean) ^ 3) as s3
      from sel, bw group by 1
    )
    select m.n, m.mean, m.mn, m.mx, m.q1, m.q2, m.q3, m.mr,
      (select sum(s2) from hist) as ss2, (select sum(s3) from hist) as ss3,
      (select lo from bw) as lo, (select hi from bw) as hi, (select bins from bw) as bins,
      (select json_agg(json_build_array(i, c)) from hist) as hist,
      (select array_agg(v order by rn desc) from sel where rn > m.n - ${NORMALITY_SAMPLE}) as newest
    from m`,
  );
  const r = res.rows[0];
  const n = Number(r.n);
  let histogram: DistributionAggregate['histogram'] = null;
  if (n > 0) {
    const lo = Number(r.lo);
    const hi = Number(r.hi);
    const bins = Number(r.bins);
    const counts = new Array<number>(bins).fill(0);
    if (hi === lo) counts[0] = n;
    else for (const [i, c] of (r.hist as [number, number][]) ?? []) counts[i] = c;
    histogram = { lo, step: hi === lo ? 0 : (hi - lo) / bins, counts };
  }
  return {
    n,
    mean: num(r.mean),
    ss2: num(r.ss2),
    ss3: num(r.ss3),
    min: num(r.mn),
    max: num(r.mx),
    q1: num(r.q1),
    median: num(r.q2),
    q3: num(r.q3),
    movingRangeSum: num(r.mr),
    histogram,
    newest: ((r.newest as (number | string)[] | null) ?? []).map(Number),
  };
}

/** SQL of the grouping key and its label (labels are read after grouping, from small tables). */
function groupSql(by: CompareBy): { key: SQL; label: SQL } {
  switch (by) {
    case 'station':
      return {
        key: sql`${s.stationId}::text`,
        label: sql`(select ${stations.name} from ${stations} where ${stations.id}::text collate "C" = g.g)`,
      };
    case 'hallBoardLot':
      return { key: sql`${s.hallBoardLot}`, label: sql`nullif(g.g, '')` };
    case 'magnetRingLot':
      return { key: sql`${s.magnetRingLot}`, label: sql`nullif(g.g, '')` };
    case 'statorLot':
      return { key: sql`${s.statorLot}`, label: sql`nullif(g.g, '')` };
    case 'operator':
      return {
        key: sql`${s.operatorId}::text`,
        label: sql`(select ${users.displayName} from ${users} where ${users.id}::text collate "C" = g.g)`,
      };
    case 'recipeVersion':
      return { key: sql`${s.recipeVersion}::text`, label: sql`'Recipe version ' || g.g` };
  }
}

export interface GroupAggregate {
  /** Null where the grouping value is not recorded (grouped under ''). */
  key: string | null;
  label: string | null;
  n: number;
  mean: number;
  sd: number | null;
  q1: number;
  median: number;
  q3: number;
  /** Lowest and highest values inside 1.5 IQR of the box (null when none is). */
  inLow: number | null;
  inHigh: number | null;
  /** The lowest values outside 1.5 IQR of the box, ascending, at most MAX_OUTLIERS. */
  outliers: number[];
  /** The group's newest values (at most GROUP_NORMALITY_SAMPLE), for its normality test. */
  newest: number[];
}

/** Per-group figures of a comparison in one statement: summaries, box figures, newest values. */
export async function comparisonAggregate(
  db: DbOrTx,
  filter: AnalysisFilter,
  by: CompareBy,
): Promise<GroupAggregate[]> {
  const store = calibrationStoreOf(db);
  if (store) {
    const sel = await selectRows(store, filter);
    const { figures } = groupedOf(store, sel, filter.figure, by);
    const labels = await groupLabels(
      db,
      by,
      figures.map((f) => f.key),
    );
    return figures.map((g) => ({ ...g, key: g.key === '' ? null : g.key, label: labels.get(g.key) ?? null }));
  }
  const group = groupSql(by);
  const { value, from } = statsSelection(filter);
  const res = await inSortRoom(
    db,
    sql`
    -- Groups compare byte-wise (collation "C"): sorting by a lot under the database's language collation
    -- cost several times more, and equality is the same.
    with sel as materialized (
      select coalesce(${group.key}, '') collate "C" as g, ${value} as v, ${s.computedAt} as t,
        ${s.calibrationId} as id ${from}
    ),
    g as (
      select g, n, mean, sd, q[1] as q1, q[2] as q2, q[3] as q3 from (
        select g, count(*)::int as n, avg(v) as mean, stddev_samp(v) as sd,
          percentile_cont(array[0.25, 0.5, 0.75]) within group (order by v) as q
        from sel group by g
      ) a
    ),
    -- One pass for both sides of the fences: the whisker ends inside, the values outside.
    box as (
      select s.g, min(s.v) filter (where s.v >= f.lo and s.v <= f.hi) as in_low,
        max(s.v) filter (where s.v >= f.lo and s.v <= f.hi) as in_high,
        array_agg(s.v) filter (where s.v < f.lo or s.v > f.hi) as outside
      from sel s join (select g, q1 - 1.5 * (q3 - q1) as lo, q3 + 1.5 * (q3 - q1) as hi from g) f on f.g = s.g
      group by s.g
    ),
    newest as (
      select g, array_agg(v) as vs from (
        select g, v, row_number() over (partition by g order by t desc, id desc) as rn from sel
      ) x where rn <= ${GROUP_NORMALITY_SAMPLE} group by g
    )
    select g.g as key, ${group.label} as label, g.n, g.mean, g.sd, g.q1, g.q2, g.q3,
      box.in_low, box.in_high, box.outside, newest.vs as newest
    from g
    join box on box.g = g.g
    join newest on newest.g = g.g`,
  );
  return res.rows.map((r) => {
    return {
      key: r.key === '' ? null : (r.key as string),
      label: (r.label as string | null) ?? null,
      n: Number(r.n),
      mean: Number(r.mean),
      sd: num(r.sd),
      q1: Number(r.q1),
      median: Number(r.q2),
      q3: Number(r.q3),
      inLow: num(r.in_low),
      inHigh: num(r.in_high),
      // The lowest outside values, ascending (few: those beyond 1.5 IQR of the box).
      outliers: ((r.outside as (number | string)[] | null) ?? [])
        .map(Number)
        .sort((a, b) => a - b)
        .slice(0, MAX_OUTLIERS),
      newest: ((r.newest as (number | string)[] | null) ?? []).map(Number),
    };
  });
}

/**
 * Sums of the tie-averaged ranks of each group's values among all values, and Σ (t³ − t) over tied values:
 * what Kruskal–Wallis needs, read only when some group does not look normal (a second pass over the data).
 */
export async function groupRankSums(
  db: DbOrTx,
  filter: AnalysisFilter,
  by: CompareBy,
): Promise<{ rankSums: Map<string, number>; ties: number }> {
  const store = calibrationStoreOf(db);
  if (store) {
    const grouped = groupedOf(store, await selectRows(store, filter), filter.figure, by);
    return {
      rankSums: new Map(grouped.figures.map((f, g) => [f.key, grouped.rankSums[g]])),
      ties: grouped.ties,
    };
  }
  const group = groupSql(by);
  const { value, from } = statsSelection(filter);
  const res = await inSortRoom(
    db,
    sql`
    with sel as (select coalesce(${group.key}, '') as g, ${value} as v ${from}),
    -- One sort by value: the lowest rank of each value plus half its ties is its tie-averaged rank.
    r as (
      select g,
        (rank() over (order by v))::float8 + (count(*) over (partition by v) - 1)::float8 / 2 as ar,
        (count(*) over (partition by v))::float8 as tc
      from sel
    )
    select g, sum(ar) as rank_sum, sum(tc * tc - 1) as tie_part
    from r group by g`,
  );
  // Σ over rows of (t² − 1) is Σ over tied values of (t³ − t).
  return {
    rankSums: new Map(res.rows.map((r) => [r.g as string, Number(r.rank_sum)])),
    ties: res.rows.reduce((sum, r) => sum + Number(r.tie_part), 0),
  };
}

/** How many calibrations the filter selects (with a value of its figure). */
async function countCalibrationFigures(db: DbOrTx, filter: AnalysisFilter): Promise<number> {
  const { from } = statsSelection(filter);
  const res = await db.execute<{ n: string }>(sql`select count(*) as n ${from}`);
  return Number(res.rows[0].n);
}

export interface ChartRow {
  unitId: string;
  serial: string;
  /** When it was computed, as Date.prototype.toISOString writes it (whole milliseconds, UTC). */
  computedAt: string;
  value: number;
}

/**
 * The newest `limit` values the filter selects (optionally within [from, to)), returned oldest first, with
 * the count of every matching value (a separate narrow count, so the rows query stops at its limit).
 */
export async function newestFigures(
  db: DbOrTx,
  filter: AnalysisFilter,
  opts: { limit: number; from?: Date; to?: Date; withTotal?: boolean },
): Promise<{ rows: ChartRow[]; total: number }> {
  const window: SQL[] = [];
  if (opts.from) window.push(gte(s.computedAt, opts.from));
  if (opts.to) window.push(lt(s.computedAt, opts.to));
  const { value, from } = statsSelection(filter, window);
  // Backwards along the station's (or the model's) time index, stopping at the limit. The time comes as the text
  // a chart prints (toISOString's form, milliseconds truncated as a Date keeps them): PostgreSQL writes it faster
  // than ten thousand Dates are made and formatted here.
  const rowsQuery = db.execute<{ unit_id: string; serial: string; at: string; v: number }>(sql`
    select ${s.unitId} as unit_id, ${s.serial} as serial,
      to_char(${s.computedAt} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as at, ${value} as v
    ${from}
    order by ${s.computedAt} desc, ${s.calibrationId} desc
    limit ${opts.limit}`);
  const [res, total] = await Promise.all([
    rowsQuery,
    opts.withTotal === false ? Promise.resolve(-1) : countOf(db, filter),
  ]);
  const found = res.rows;
  const rows = new Array<ChartRow>(found.length);
  for (let i = 0, k = found.length - 1; k >= 0; i++, k--) {
    const r = found[k];
    rows[i] = { unitId: r.unit_id, serial: r.serial, computedAt: r.at, value: Number(r.v) };
  }
  return { rows, total };
}

/**
 * The column of a grouping kept in memory, what turns its value into a small non-negative code, and the
 * grouping key of each code as the SQL path writes it ('' where not recorded).
 */
function groupCodes(store: CalibrationStore, sel: Selection, by: CompareBy) {
  const p = sel.part;
  if (by === 'recipeVersion')
    return { column: p.recipeVersion, plus: 0, keyOf: (code: number) => String(code) };
  const [column, dictionary] =
    by === 'station'
      ? [p.station, store.stations]
      : by === 'operator'
        ? [p.operator, store.operators]
        : by === 'hallBoardLot'
          ? [p.hall, store.lots]
          : by === 'magnetRingLot'
            ? [p.magnet, store.lots]
            : [p.stator, store.lots];
  // Codes from -1 (not recorded) on.
  return { column, plus: 1, keyOf: (code: number) => (code === 0 ? '' : dictionary.values[code - 1]) };
}

/** The labels of a comparison's groups (station names, operators' names), as the SQL path reads them. */
async function groupLabels(db: DbOrTx, by: CompareBy, keys: string[]): Promise<Map<string, string | null>> {
  const ids = keys.filter((k) => k !== '');
  if (by === 'station' || by === 'operator') {
    const found =
      ids.length === 0
        ? []
        : by === 'station'
          ? await db
              .select({ key: stations.id, label: stations.name })
              .from(stations)
              .where(inArray(stations.id, ids))
          : await db
              .select({ key: users.id, label: users.displayName })
              .from(users)
              .where(inArray(users.id, ids));
    return new Map(found.map((r) => [r.key, r.label]));
  }
  if (by === 'recipeVersion') return new Map(ids.map((k) => [k, `Recipe version ${k}`]));
  return new Map(ids.map((k) => [k, k]));
}

/**
 * How many calibrations the filter selects: counted in the rows kept in memory when there are (the newest rows
 * themselves come from the time index, which stops at the limit and carries the serials the points link to).
 */
async function countOf(db: DbOrTx, filter: AnalysisFilter): Promise<number> {
  const store = calibrationStoreOf(db);
  return store ? (await selectRows(store, filter)).n : countCalibrationFigures(db, filter);
}

const groupings = new WeakMap<
  Selection,
  Map<CompareBy, { figures: ReturnType<typeof groupOf>[]; rankSums: Float64Array; ties: number }>
>();

/**
 * A selection's groups' figures and rank sums, computed once per selection and grouping (the comparison and
 * its rank test share them).
 */
function groupedOf(store: CalibrationStore, sel: Selection, figure: AnalysisFigure, by: CompareBy) {
  let byKind = groupings.get(sel);
  if (!byKind) groupings.set(sel, (byKind = new Map()));
  let grouped = byKind.get(by);
  if (!grouped) {
    const { column, plus, keyOf } = groupCodes(store, sel, by);
    const g = groupsOf(
      sel,
      sortedOrderOf(sel.part, figure),
      column,
      plus,
      GROUP_NORMALITY_SAMPLE,
      store.groupScratch,
    );
    // The groups' sorted values are scratch room: their figures are taken now.
    const figures = g.codes.map((code, k) => groupOf(keyOf(code), g.sorted[k], g.newest[k], MAX_OUTLIERS));
    byKind.set(by, (grouped = { figures, rankSums: g.rankSums, ties: g.ties }));
  }
  return grouped;
}
