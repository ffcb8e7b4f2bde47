import type pg from 'pg';
import type { Measurement } from '#shared/schemas/measurement';
import { prepared } from '#server/db/prepared';
import { eq, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { measurements, type MeasurementRecord } from './measurements.table';

/** Which stored measurements a replay covers: one model, optionally a time range and stations. */
export interface ReplaySelection {
  modelId: string;
  from?: string;
  to?: string;
  stationIds?: string[];
  /** The most recent units (by their latest measurement in the selection). */
  lastUnits: number;
}

const LATEST_OF_SELECTION = `
  select id from (
      select distinct on (m.unit_id) m.id, m.received_at
        from measurements m join units u on u.id = m.unit_id
       where u.model_id = $1
         and ($2::timestamptz is null or m.received_at >= $2)
         and ($3::timestamptz is null or m.received_at <= $3)
         and ($4::uuid[] is null or m.station_id = any($4))
       order by m.unit_id, m.received_at desc) latest
    order by received_at desc
    limit $5`;

const selectionValues = (s: ReplaySelection) => [
  s.modelId,
  s.from ?? null,
  s.to ?? null,
  s.stationIds?.length ? s.stationIds : null,
  s.lastUnits,
];

/** Parses a replay row's stored measurement (see `ReplayRow.payloadJson`). */
export function replayMeasurement(row: ReplayRow): Measurement {
  return JSON.parse(row.payloadJson) as Measurement;
}

export interface ReplayRow {
  id: string;
  measurementId: string;
  unitId: string;
  serial: string;
  receivedAt: Date;
  source: 'timings' | 'capture';
  /**
   * The stored measurement as JSON text, parsed by the caller just before it is replayed: a parsed
   * body then lives for one replay instead of a whole batch, which keeps the garbage collector's work
   * and the peak memory small.
   */
  payloadJson: string;
  /** The capture's CSV text (null for posted timings: the JSON is the measurement). */
  payloadRaw: string | null;
  /** The station's own calibration with `baselineRecipeId` and this engine, when there is one. */
  baseline: {
    verdict: 'pass' | 'fail' | 'unusable';
    offsetDeg: number | null;
    /** Codes of the checks that failed. */
    failedChecks: string[];
  } | null;
}

/** One what-if's stored measurements, read in batches through a cursor. */
export interface ReplayStream {
  /** Measurements in the selection (counted in the same snapshot the cursor reads). */
  total: number;
  /** Batches of at most `batchSize` rows; the next batch is fetched while the caller works on this one. */
  batches: AsyncGenerator<ReplayRow[], void, void>;
  /** Ends the read (also after an early stop); always call it. */
  close: () => Promise<void>;
}

/**
 * Streams the latest station measurement of each of the last `lastUnits` units of the model within
 * the selection, with the station calibration by the baseline version (and this engine) when stored.
 * One connection holds a read-only snapshot and a server-side cursor, so memory stays at about two
 * batches whatever the selection's size, and nothing committed meanwhile changes the count or rows.
 */
export async function openReplayStream(
  pool: pg.Pool,
  s: ReplaySelection,
  baselineRecipeId: string,
  engineVersion: string,
  batchSize: number,
): Promise<ReplayStream> {
  const client = await pool.connect();
  let pending: Promise<unknown> | null = null;
  let closed = false;
  const close = async (err?: Error) => {
    if (closed) return;
    closed = true;
    await pending?.catch(() => {});
    if (err) return client.release(err);
    try {
      await client.query('rollback');
      client.release();
    } catch (e) {
      client.release(e as Error);
    }
  };
  try {
    await client.query('begin isolation level repeatable read read only');
    const {
      rows: [{ n }],
    } = await client.query<{ n: number }>(
      `select count(*)::int as n from (${LATEST_OF_SELECTION}) l`,
      selectionValues(s),
    );
    await client.query(
      `declare replay no scroll cursor for
       select m.id, m.measurement_id, m.unit_id, m.serial, m.received_at, m.source, m.payload::text as payload_json,
              case when m.source = 'capture' then m.payload_raw end as payload_raw,
              c.verdict as base_verdict, c.offset_deg as base_offset,
              array(select x->>'code' from jsonb_array_elements(c.result->'checks') x
                     where x->>'passed' = 'false') as base_failed
         from (${LATEST_OF_SELECTION}) l
         join measurements m on m.id = l.id
         left join calibrations c on c.measurement_pk = m.id and c.recipe_id = $6 and c.engine_version = $7
                                 and c.purpose = 'station'`,
      [...selectionValues(s), baselineRecipeId, engineVersion],
    );
    const fetch = () => {
      const q = client.query(`fetch forward ${Math.max(1, Math.floor(batchSize))} from replay`);
      pending = q;
      return q.then((r) => r.rows.map(toReplayRow));
    };
    const batches = async function* () {
      try {
        let next = fetch();
        for (;;) {
          const rows = await next;
          if (rows.length === 0) return;
          next = rows.length < batchSize ? Promise.resolve([]) : fetch();
          yield rows;
        }
      } catch (e) {
        await close(e as Error);
        throw e;
      }
    };
    return { total: n, batches: batches(), close: () => close() };
  } catch (e) {
    await close(e as Error);
    throw e;
  }
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- a raw pg row of the replay cursor
function toReplayRow(r: any): ReplayRow {
  return {
    id: r.id,
    measurementId: r.measurement_id,
    unitId: r.unit_id,
    serial: r.serial,
    receivedAt: r.received_at,
    source: r.source,
    payloadJson: r.payload_json,
    payloadRaw: r.payload_raw,
    baseline: r.base_verdict
      ? { verdict: r.base_verdict, offsetDeg: r.base_offset, failedChecks: r.base_failed ?? [] }
      : null,
  };
}

/**
 * A stored measurement exactly as kept (canonical body, the text as posted, its SHA-256) with the
 * recipe version of its newest station calibration (null while it is computing).
 */
export async function storedMeasurement(db: DbOrTx, measurementId: string) {
  const [row] = await db
    .select({
      measurementId: measurements.measurementId,
      serial: measurements.serial,
      source: measurements.source,
      payload: measurements.payload,
      payloadRaw: measurements.payloadRaw,
      payloadSha256: measurements.payloadSha256,
      receivedAt: measurements.receivedAt,
      recipeId: sql<
        string | null
      >`(select c.recipe_id from calibrations c where c.measurement_pk = "measurements"."id"
        and c.purpose = 'station' order by c.computed_at desc limit 1)`,
    })
    .from(measurements)
    .where(eq(measurements.measurementId, measurementId));
  return row;
}

/**
 * Whether a measurement with this idempotency key is already stored (any station): a repeated post gets
 * its stored answer (or the 409 of a conflicting key) before the qualification gate is asked.
 */
export async function measurementIdTaken(pool: pg.Pool, measurementId: string): Promise<boolean> {
  const { rows } = await pool.query<{ taken: boolean }>(
    prepared('select exists (select 1 from measurements where measurement_id = $1) as taken', [
      measurementId,
    ]),
  );
  return rows[0].taken;
}

/** Production measurements a station has posted since an instant (qualification counts units by this). */
export async function countStationMeasurementsSince(
  pool: pg.Pool,
  stationId: string,
  since: Date,
): Promise<number> {
  const { rows } = await pool.query<{ n: number }>(
    prepared('select count(*)::int as n from measurements where station_id = $1 and received_at > $2', [
      stationId,
      since,
    ]),
  );
  return rows[0].n;
}

/**
 * A unit's measurements, oldest first: who posted them where and when, the stored hash and the size of the
 * body as posted; with `bodies`, the text as posted too (the record's ZIP).
 */
export async function measurementsOfUnit(db: DbOrTx, unitId: string, bodies = false) {
  return db
    .select({
      id: measurements.id,
      measurementId: measurements.measurementId,
      stationId: measurements.stationId,
      operatorId: measurements.operatorId,
      source: measurements.source,
      receivedAt: measurements.receivedAt,
      payloadSha256: measurements.payloadSha256,
      chars: sql<number>`length(${measurements.payloadRaw})`.mapWith(Number),
      payloadRaw: bodies ? measurements.payloadRaw : sql<string | null>`null`,
    })
    .from(measurements)
    .where(eq(measurements.unitId, unitId))
    .orderBy(measurements.receivedAt);
}

/** A measurement's identity and hash (not its body). */
export async function measurementIdentity(db: DbOrTx, measurementId: string) {
  const [row] = await db
    .select({
      id: measurements.id,
      measurementId: measurements.measurementId,
      stationId: measurements.stationId,
      unitId: measurements.unitId,
      serial: measurements.serial,
      payloadSha256: measurements.payloadSha256,
    })
    .from(measurements)
    .where(eq(measurements.measurementId, measurementId));
  return row;
}
export type MeasurementIdentity = NonNullable<Awaited<ReturnType<typeof measurementIdentity>>>;

/** A stored measurement row by its primary key. */
export async function measurementByPk(db: DbOrTx, pk: string): Promise<MeasurementRecord | undefined> {
  const [row] = await db.select().from(measurements).where(eq(measurements.id, pk));
  return row;
}

export async function countMeasurements(db: DbOrTx): Promise<number> {
  const [m] = await db.select({ n: sql<number>`count(*)::int` }).from(measurements);
  return m.n;
}
