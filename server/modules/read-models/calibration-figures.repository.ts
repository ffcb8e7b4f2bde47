// Over ~350 lines on purpose: every statistics statement shares the one filter (`conditions`) and figure
// (`figureSql`) on the joined calibrations; splitting them would split the filter from its users.
import { and, asc, desc, eq, gte, inArray, lt, sql, type SQL } from 'drizzle-orm';
import { PgDialect } from 'drizzle-orm/pg-core';
import pg from 'pg';
import type { DbOrTx } from '#server/db/client';
import { recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';
import type { AnalysisFigure, AnalysisFilter } from '#shared/schemas/analysis';
import { calibrations, programmingConfirmations } from '../calibrations/calibrations.table';
import { measurements } from '../measurements/measurements.table';

/**
 * Read-only queries over calibrations for the line statistics. Calibrations are owned here; the joins
 * reach the unit (model, lots), station, recipe version and operator that the filter names.
 */

const placement = (sensor: 'A' | 'B' | 'C') =>
  sql<
    number | null
  >`(jsonb_path_query_first(${calibrations.result}, ${`$.sensors[*] ? (@.sensor == "${sensor}").placementDeg`}::jsonpath) #>> '{}')::float8`;

/** SQL of each figure; JSON figures come from the stored engine result. */
export function figureSql(figure: AnalysisFigure): SQL<number | null> {
  switch (figure) {
    case 'offsetDeg':
      return sql<number | null>`${calibrations.offsetDeg}`;
    case 'lagDeg':
      return sql<number | null>`(${calibrations.result}->>'lagDeg')::float8`;
    case 'speedRpm':
      return sql<number | null>`(${calibrations.result}->>'speedRpm')::float8`;
    case 'fitResidualDeg':
      return sql<number | null>`(${calibrations.result}->>'fitResidualDeg')::float8`;
    case 'keVPerKrpm':
      return sql<number | null>`(${calibrations.result}->'capture'->>'keVPerKrpmPeak')::float8`;
    case 'placementADeg':
      return placement('A');
    case 'placementBDeg':
      return placement('B');
    case 'placementCDeg':
      return placement('C');
  }
}

/** WHERE conditions of the filter (units always joined; recipes and measurements where the filter names them). */
export function conditions(f: AnalysisFilter): SQL[] {
  const out: (SQL | undefined)[] = [
    eq(units.modelId, f.model),
    eq(calibrations.purpose, f.purpose),
    f.stations ? inArray(calibrations.stationId, f.stations) : undefined,
    f.hallBoardLots ? inArray(units.hallBoardLot, f.hallBoardLots) : undefined,
    f.magnetRingLots ? inArray(units.magnetRingLot, f.magnetRingLots) : undefined,
    f.statorLots ? inArray(units.statorLot, f.statorLots) : undefined,
    f.recipeVersions ? inArray(recipes.version, f.recipeVersions) : undefined,
    f.operators ? inArray(measurements.operatorId, f.operators) : undefined,
    f.from ? gte(calibrations.computedAt, new Date(f.from)) : undefined,
    f.to ? lt(calibrations.computedAt, new Date(f.to)) : undefined,
    f.verdict === 'all'
      ? inArray(calibrations.verdict, ['pass', 'fail'])
      : eq(calibrations.verdict, f.verdict),
    f.attempts === 'first' ? eq(calibrations.attempt, 1) : undefined,
  ];
  return out.filter((c): c is SQL => c !== undefined);
}

export interface CalibrationFigureRow {
  calibrationId: string;
  unitId: string;
  serial: string;
  stationId: string;
  stationName: string;
  computedAt: Date;
  value: number;
  verdict: 'pass' | 'fail' | 'unusable';
  attempt: number | null;
  recipeVersion: number;
  hallBoardLot: string | null;
  magnetRingLot: string | null;
  statorLot: string | null;
  operatorId: string | null;
  operatorName: string | null;
}

/**
 * One figure of every calibration the filter selects, oldest first. With `newest`, only the newest that many
 * (still returned oldest first), plus the count of all matching rows.
 */
export async function selectCalibrationFigures(
  db: DbOrTx,
  filter: AnalysisFilter,
  opts: { newest?: number; from?: Date; to?: Date; after?: { at: Date; id: string }; limit?: number } = {},
): Promise<{ rows: CalibrationFigureRow[]; total: number }> {
  const value = figureSql(filter.figure);
  const where = [...conditions(filter), sql`${value} is not null`];
  if (opts.from) where.push(gte(calibrations.computedAt, opts.from));
  if (opts.to) where.push(lt(calibrations.computedAt, opts.to));
  if (opts.after)
    where.push(sql`(${calibrations.computedAt}, ${calibrations.id}) > (${opts.after.at}, ${opts.after.id})`);
  const base = db
    .select({
      calibrationId: calibrations.id,
      unitId: calibrations.unitId,
      serial: units.serial,
      stationId: calibrations.stationId,
      stationName: stations.name,
      computedAt: calibrations.computedAt,
      value: sql<number>`${value}`.mapWith(Number),
      verdict: calibrations.verdict,
      attempt: calibrations.attempt,
      recipeVersion: recipes.version,
      hallBoardLot: units.hallBoardLot,
      magnetRingLot: units.magnetRingLot,
      statorLot: units.statorLot,
      operatorId: measurements.operatorId,
      operatorName: users.displayName,
    })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .leftJoin(users, eq(users.id, measurements.operatorId))
    .where(and(...where));
  if (opts.newest) {
    // The newest rows come backwards along the (station, time) index; the count of every matching row is a
    // separate, narrow query (a window count would drag every column of every matching row through a sort).
    const [found, counted] = await Promise.all([
      base.orderBy(desc(calibrations.computedAt), desc(calibrations.id)).limit(opts.newest),
      db
        .select({ n: sql<number>`count(*)`.mapWith(Number) })
        .from(calibrations)
        .innerJoin(units, eq(units.id, calibrations.unitId))
        .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
        .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
        .where(and(...where)),
    ]);
    return { rows: found.reverse(), total: counted[0]?.n ?? 0 };
  }
  const found = opts.limit
    ? await base.orderBy(asc(calibrations.computedAt), asc(calibrations.id)).limit(opts.limit)
    : await base.orderBy(asc(calibrations.computedAt), asc(calibrations.id));
  return { rows: found, total: found.length };
}

export interface StationDayHealth {
  day: string;
  stationId: string;
  station: string;
  units: number;
  firstAttempts: number;
  firstPasses: number;
  retests: number;
  counted: number;
}

/** Per station and UTC day: units seen, first attempts and their passes, retests (attempt ≥ 2). */
export async function stationDayHealth(db: DbOrTx, filter: AnalysisFilter): Promise<StationDayHealth[]> {
  const day = sql<string>`to_char(date_trunc('day', ${calibrations.computedAt} at time zone 'UTC'), 'YYYY-MM-DD')`;
  return db
    .select({
      day,
      stationId: calibrations.stationId,
      station: stations.name,
      units: sql<number>`count(distinct ${calibrations.unitId})`.mapWith(Number),
      firstAttempts: sql<number>`count(*) filter (where ${calibrations.attempt} = 1)`.mapWith(Number),
      firstPasses:
        sql<number>`count(*) filter (where ${calibrations.attempt} = 1 and ${calibrations.verdict} = 'pass')`.mapWith(
          Number,
        ),
      retests: sql<number>`count(*) filter (where ${calibrations.attempt} > 1)`.mapWith(Number),
      counted: sql<number>`count(*) filter (where ${calibrations.attempt} is not null)`.mapWith(Number),
    })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .where(and(...conditions({ ...filter, attempts: 'all', purpose: 'station' })))
    .groupBy(day, calibrations.stationId, stations.name)
    .orderBy(day, stations.name);
}

/** Programming read-backs that did not match, per station and UTC day, for the filtered model. */
export async function programmingMismatchesByDay(
  db: DbOrTx,
  filter: AnalysisFilter,
): Promise<{ day: string; stationId: string; count: number }[]> {
  const day = sql<string>`to_char(date_trunc('day', ${programmingConfirmations.confirmedAt} at time zone 'UTC'), 'YYYY-MM-DD')`;
  const where: SQL[] = [eq(units.modelId, filter.model), eq(programmingConfirmations.matches, false)];
  if (filter.stations) where.push(inArray(programmingConfirmations.stationId, filter.stations));
  if (filter.from) where.push(gte(programmingConfirmations.confirmedAt, new Date(filter.from)));
  if (filter.to) where.push(lt(programmingConfirmations.confirmedAt, new Date(filter.to)));
  return db
    .select({
      day,
      stationId: programmingConfirmations.stationId,
      count: sql<number>`count(*)`.mapWith(Number),
    })
    .from(programmingConfirmations)
    .innerJoin(units, eq(units.id, programmingConfirmations.unitId))
    .where(and(...where))
    .groupBy(day, programmingConfirmations.stationId);
}

/** How often each check failed among the filtered calibrations, most frequent first. */
export async function failedCheckCounts(
  db: DbOrTx,
  filter: AnalysisFilter,
): Promise<{ code: string; count: number }[]> {
  const where = and(...conditions({ ...filter, verdict: 'fail' }));
  const rows = await db.execute<{ code: string; count: string }>(sql`
    select ch->>'code' as code, count(*) as count
    from ${calibrations}
    inner join ${units} on ${units.id} = ${calibrations.unitId}
    inner join ${recipes} on ${recipes.id} = ${calibrations.recipeId}
    inner join ${measurements} on ${measurements.id} = ${calibrations.measurementPk}
    cross join lateral jsonb_array_elements(${calibrations.result}->'checks') as ch
    where ${where} and (ch->>'passed')::boolean = false
    group by 1 order by 2 desc, 1`);
  return rows.rows.map((r) => ({ code: r.code, count: Number(r.count) }));
}

/** Daily mean placement residual of each hall sensor. */
export async function placementTrend(
  db: DbOrTx,
  filter: AnalysisFilter,
): Promise<{ day: string; aDeg: number | null; bDeg: number | null; cDeg: number | null }[]> {
  const day = sql<string>`to_char(date_trunc('day', ${calibrations.computedAt} at time zone 'UTC'), 'YYYY-MM-DD')`;
  const avg = (s: 'A' | 'B' | 'C') =>
    sql<number | null>`avg(${placement(s)})`.mapWith((v) => (v === null ? null : Number(v)));
  return db
    .select({ day, aDeg: avg('A'), bDeg: avg('B'), cDeg: avg('C') })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .where(and(...conditions(filter)))
    .groupBy(day)
    .orderBy(day);
}

/** What the filter bar can offer for a model: stations, lots, operators and recipe versions with data. */
export async function analysisChoices(db: DbOrTx, modelId: string) {
  const base = and(eq(units.modelId, modelId), inArray(calibrations.verdict, ['pass', 'fail']));
  const [st, lots, ops, versions] = await Promise.all([
    db
      .selectDistinct({ id: stations.id, name: stations.name })
      .from(calibrations)
      .innerJoin(units, eq(units.id, calibrations.unitId))
      .innerJoin(stations, eq(stations.id, calibrations.stationId))
      .where(base)
      .orderBy(stations.name),
    db
      .selectDistinct({ hb: units.hallBoardLot, mr: units.magnetRingLot, st: units.statorLot })
      .from(units)
      .where(eq(units.modelId, modelId)),
    db
      .selectDistinct({ id: users.id, name: users.displayName })
      .from(calibrations)
      .innerJoin(units, eq(units.id, calibrations.unitId))
      .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
      .innerJoin(users, eq(users.id, measurements.operatorId))
      .where(base)
      .orderBy(users.displayName),
    db
      .selectDistinct({ version: recipes.version })
      .from(calibrations)
      .innerJoin(units, eq(units.id, calibrations.unitId))
      .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
      .where(base)
      .orderBy(recipes.version),
  ]);
  const distinct = (xs: (string | null)[]) =>
    [...new Set(xs.filter((x): x is string => !!x))].sort((a, b) => a.localeCompare(b));
  return {
    stations: st,
    hallBoardLots: distinct(lots.map((l) => l.hb)),
    magnetRingLots: distinct(lots.map((l) => l.mr)),
    statorLots: distinct(lots.map((l) => l.st)),
    operators: ops,
    recipeVersions: versions.map((v) => v.version),
  };
}

export interface WatchRow {
  calibrationId: string;
  unitId: string;
  serial: string;
  offsetDeg: number;
  computedAt: Date;
}

/**
 * A station's judged calibrations (pass or fail, as the station got them) of one model after a cursor, in
 * the order they were computed: what a watched chart takes in next.
 */
export async function stationCalibrationsAfter(
  db: DbOrTx,
  q: { stationId: string; modelId: string; after: { at: Date; id: string } | null; limit: number },
): Promise<WatchRow[]> {
  const where: SQL[] = [
    eq(calibrations.stationId, q.stationId),
    eq(units.modelId, q.modelId),
    eq(calibrations.purpose, 'station'),
    inArray(calibrations.verdict, ['pass', 'fail']),
    sql`${calibrations.offsetDeg} is not null`,
  ];
  if (q.after)
    where.push(sql`(${calibrations.computedAt}, ${calibrations.id}) > (${q.after.at}, ${q.after.id})`);
  const rows = await db
    .select({
      calibrationId: calibrations.id,
      unitId: calibrations.unitId,
      serial: units.serial,
      offsetDeg: calibrations.offsetDeg,
      computedAt: calibrations.computedAt,
    })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(and(...where))
    .orderBy(asc(calibrations.computedAt), asc(calibrations.id))
    .limit(q.limit);
  return rows.map((r) => ({ ...r, offsetDeg: r.offsetDeg! }));
}

/** The newest station calibration of a station × model (where a chart whose settings change starts after). */
export async function newestStationCalibration(
  db: DbOrTx,
  q: { stationId: string; modelId: string },
): Promise<{ at: Date; id: string } | null> {
  const [row] = await db
    .select({ at: calibrations.computedAt, id: calibrations.id })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(
      and(
        eq(calibrations.stationId, q.stationId),
        eq(units.modelId, q.modelId),
        eq(calibrations.purpose, 'station'),
      ),
    )
    .orderBy(desc(calibrations.computedAt), desc(calibrations.id))
    .limit(1);
  return row ?? null;
}

/** Every station × model pair with at least one station calibration: the watched charts there are. */
export async function stationModelPairs(db: DbOrTx): Promise<{ stationId: string; modelId: string }[]> {
  return db
    .selectDistinct({ stationId: calibrations.stationId, modelId: units.modelId })
    .from(calibrations)
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .where(eq(calibrations.purpose, 'station'));
}

/**
 * The statement that lists the filtered calibrations for the CSV export, in production order, one text column
 * per CSV column (time as ISO 8601 UTC), with the filter's values written in as quoted literals: COPY takes no
 * bind parameters. Each literal is escaped by the driver's escapeLiteral, and a quoted literal is typed by its
 * context exactly as a text bind parameter is.
 */
export function calibrationsCsvStatement(filter: AnalysisFilter): string {
  const value = figureSql(filter.figure);
  const query = sql`select ${units.serial}, ${stations.name},
      to_char(${calibrations.computedAt} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
      ${calibrations.verdict}, ${calibrations.attempt}, ${recipes.version}, ${value},
      ${units.hallBoardLot}, ${units.magnetRingLot}, ${units.statorLot}, ${users.displayName}
    from ${calibrations}
    inner join ${units} on ${units.id} = ${calibrations.unitId}
    inner join ${stations} on ${stations.id} = ${calibrations.stationId}
    inner join ${recipes} on ${recipes.id} = ${calibrations.recipeId}
    inner join ${measurements} on ${measurements.id} = ${calibrations.measurementPk}
    left join ${users} on ${users.id} = ${measurements.operatorId}
    where ${and(...conditions(filter), sql`${value} is not null`)}
    order by ${calibrations.computedAt}, ${calibrations.id}`;
  const rendered = new PgDialect({ casing: 'snake_case' }).sqlToQuery(query);
  const text = rendered.sql.replace(/\$(\d+)/g, (whole, i: string) => {
    const k = Number(i) - 1;
    if (k < 0 || k >= rendered.params.length) return whole;
    const p = rendered.params[k];
    return pg.escapeLiteral(p instanceof Date ? p.toISOString() : String(p));
  });
  return text;
}
