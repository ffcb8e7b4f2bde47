import { createHash, randomUUID } from 'node:crypto';
import { travelerSettings } from '#server/env';
import type pg from 'pg';
import { and, desc, eq } from 'drizzle-orm';
import type { Db } from '#server/db/client';
import { prepared } from '#server/db/prepared';
import { withTransaction, type Transaction } from '#server/db/transaction';
import type { SessionUser } from '#server/lib/auth';
import { travelerErrors } from './travelers.errors';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import { countAuditOf, insertAudit } from '../audit/audit.repository';
import { latestJudgedCalibrationOfUnit } from '../calibrations/calibrations.repository';
import { travelerSources, type TravelerSource } from '../read-models/traveler-data.repository';
import { EVENTS_CHANNEL } from '../events/event-hub';
import type { LineEvent } from '#shared/schemas/events';
import { findUnitBySerial } from '../units/units.service';
import { renderTravelerPdf } from './traveler.render';
import type { TravelerDataInput } from './traveler.types';
import { travelers, type TravelerRecord } from './travelers.table';

/** The demo scenario's company and plant; a plant sets its own with TRAVELER_COMPANY / TRAVELER_PLANT. */
export const TRAVELER_HEADER = {
  companyName: travelerSettings().TRAVELER_COMPANY,
  plantName: travelerSettings().TRAVELER_PLANT,
};

const lotText = (v: string | null) => (v && /^[A-Za-z0-9]/.test(v) ? v : 'n/a');

/** Gathers everything the traveler prints for one calibration. */
export async function travelerData(
  client: pg.Pool | pg.PoolClient,
  calibrationId: string,
  printNumber: number,
  pageSize: 'A4' | 'LETTER',
  generatedAt: Date,
): Promise<TravelerDataInput> {
  const row = (await travelerSources(client, [calibrationId])).get(calibrationId);
  if (!row || row.cal.verdict === 'unusable') throw travelerErrors.notPrintable();
  return travelerDataOf(row, printNumber, pageSize, generatedAt);
}

function travelerDataOf(
  row: TravelerSource,
  printNumber: number,
  pageSize: 'A4' | 'LETTER',
  generatedAt: Date,
): TravelerDataInput {
  const result = row.cal.result as CalibrationResult;
  const { operator, conf } = row;
  return {
    ...TRAVELER_HEADER,
    lineName: row.station.line,
    serial: row.unit.serial,
    model: {
      name: row.model.name.toUpperCase().startsWith(row.model.code.toUpperCase())
        ? row.model.name
        : `${row.model.code} ${row.model.name}`,
      polePairs: row.model.polePairs,
    },
    lots: {
      hallBoard: lotText(row.unit.hallBoardLot),
      magnetRing: lotText(row.unit.magnetRingLot),
      stator: lotText(row.unit.statorLot),
    },
    verdict: row.cal.verdict as 'pass' | 'fail',
    offsetDeg: result.offsetDeg ?? 0,
    offsetCounts: result.offsetCounts ?? 0,
    countsPerTurn: row.recipe.countsPerTurn,
    lagDeg: result.lagDeg ?? undefined,
    edges: result.edges.map((e) => ({ sensor: e.sensor, edge: e.edge, residualDeg: e.residualDeg ?? 0 })),
    speedRpm: result.speedRpm,
    electricalTurns: result.electricalTurns,
    checks: result.checks.slice(0, 24).map((c) => ({
      code: c.code,
      passed: c.passed,
      value: typeof c.value === 'string' ? c.value.slice(0, 60) : c.value,
      limit: typeof c.limit === 'string' ? c.limit.slice(0, 60) : c.limit,
      unit: c.unit.slice(0, 16) || undefined,
      sentence: c.message.slice(0, 240),
    })),
    stationName: row.station.name,
    operatorName: operator?.displayName ?? 'not recorded',
    measuredAt: row.m.receivedAt.toISOString(),
    computedAt: row.cal.computedAt.toISOString(),
    generatedAt: generatedAt.toISOString(),
    timeZone: travelerSettings().TRAVELER_TIME_ZONE,
    recipe: {
      name: (row.recipe.name ?? row.model.code).replace(/[^A-Za-z0-9 ._\-/#+:]/g, '-'),
      version: row.recipe.version,
    },
    engineVersion: row.cal.engineVersion,
    programming: conf
      ? conf.matches
        ? {
            status: 'confirmed',
            writtenCounts: conf.writtenCounts,
            readBackCounts: conf.readBackCounts,
            checksum: conf.checksum || 'not given',
            confirmedAt: conf.confirmedAt.toISOString(),
          }
        : {
            status: 'mismatch',
            writtenCounts: conf.writtenCounts,
            readBackCounts: conf.readBackCounts,
            checksum: conf.checksum || undefined,
            confirmedAt: conf.confirmedAt.toISOString(),
          }
      : { status: 'pending' },
    hold:
      row.unit.status === 'on_hold'
        ? { reason: (row.unit.holdReason ?? 'no reason recorded').slice(0, 240) || 'no reason recorded' }
        : undefined,
    printNumber,
    pageSize,
  };
}

async function store(
  t: Transaction,
  calibrationId: string,
  unitId: string,
  printNumber: number,
  pageSize: 'A4' | 'LETTER',
  requestedBy: string | null,
  now: Date,
): Promise<TravelerRecord> {
  const t0 = performance.now();
  const pdf = await renderTravelerPdf(
    await travelerData(t.client, calibrationId, printNumber, pageSize, now),
  );
  const renderMs = Math.round(performance.now() - t0);
  const [row] = await t.tx
    .insert(travelers)
    .values({
      unitId,
      calibrationId,
      printNumber,
      pageSize,
      pdf,
      sha256: createHash('sha256').update(pdf).digest('hex'),
      bytes: pdf.length,
      renderMs,
      requestedBy,
      createdAt: now,
    })
    .returning();
  return row;
}

const lockKey = (calibrationId: string) => `traveler:${calibrationId}`;

/**
 * Transaction locks on calibrations' travelers: prints of one calibration take turns. Several are taken
 * in one statement, in key order, so two batches that share calibrations cannot deadlock.
 */
async function lockCalibrations(client: pg.PoolClient, calibrationIds: readonly string[]): Promise<void> {
  const keys = [...new Set(calibrationIds.map(lockKey))].sort();
  await client.query(
    prepared(
      `select pg_advisory_xact_lock(hashtextextended(k, 0))
         from (select k from unnest($1::text[]) as k order by k) keys`,
      [keys],
    ),
  );
}

/** What the job made of one calibration: print 1's id (null for an unusable one), or why it failed. */
export type FirstPrintOutcome =
  | { calibrationId: string; travelerId: string | null; error?: undefined }
  | { calibrationId: string; error: Error };

interface RenderedFirstPrint {
  calibrationId: string;
  id: string;
  unitId: string;
  pdf: Buffer;
  renderMs: number;
  event: string;
}

/**
 * Stores print 1 of each rendered calibration that has none yet, and announces each one stored, in one
 * statement; answers each calibration's print 1 (stored now, or found). The caller holds the calibrations'
 * locks: the statement starts after they were taken, so its snapshot sees any print a concurrent run stored.
 */
async function storeFirstPrints(
  client: pg.PoolClient,
  prints: RenderedFirstPrint[],
  pageSize: 'A4' | 'LETTER',
  now: Date,
): Promise<Map<string, string>> {
  const values: unknown[] = [pageSize, now.toISOString(), EVENTS_CHANNEL];
  const rows = prints.map((p) => {
    const at = values.length;
    values.push(
      p.id,
      p.unitId,
      p.calibrationId,
      p.pdf,
      createHash('sha256').update(p.pdf).digest('hex'),
      p.pdf.length,
      p.renderMs,
      p.event,
    );
    const n = (i: number) => `$${at + i}`;
    return `(${n(1)}::uuid, ${n(2)}::uuid, ${n(3)}::uuid, ${n(4)}::bytea, ${n(5)}::text, ${n(6)}::int, ${n(7)}::int, ${n(8)}::text)`;
  });
  // Prepared per batch size: the text differs only in how many rows it lists.
  const { rows: stored } = await client.query<{ calibration_id: string; id: string }>(
    prepared(
      `with v (id, unit_id, calibration_id, pdf, sha256, bytes, render_ms, event) as (values ${rows.join(', ')}),
       existing as (
         select distinct on (t.calibration_id) t.calibration_id, t.id
           from travelers t join v on t.calibration_id = v.calibration_id
          where t.print_number = 1 order by t.calibration_id, t.created_at
       ), ins as (
         insert into travelers (id, unit_id, calibration_id, print_number, page_size, pdf, sha256, bytes, render_ms, created_at)
         select v.id, v.unit_id, v.calibration_id, 1, $1::page_size, v.pdf, v.sha256, v.bytes, v.render_ms, $2::timestamptz
           from v where not exists (select 1 from existing e where e.calibration_id = v.calibration_id)
         returning id, calibration_id
       )
       select ins.calibration_id, ins.id, pg_notify($3, v.event) from ins join v on v.id = ins.id
       union all select calibration_id, id, null from existing`,
      values,
    ),
  );
  return new Map(stored.map((r) => [r.calibration_id, r.id]));
}

/**
 * The job, for a batch of calibrations: print 1 of each committed calibration's traveler, once (a second
 * run finds it and stops). One statement reads everything the batch prints; each page is rendered outside
 * any transaction; then, under locks named after the calibrations, one statement stores every new print
 * and announces it: five round trips for the whole batch. A calibration that cannot be rendered or stored
 * fails alone: the others' prints are stored (when storing them together fails, each is stored on its own).
 */
export async function renderFirstTravelers(
  pool: pg.Pool,
  calibrationIds: readonly string[],
  now: Date,
  pageSize: 'A4' | 'LETTER' = 'A4',
): Promise<FirstPrintOutcome[]> {
  const ids = [...new Set(calibrationIds)];
  const sources = await travelerSources(pool, ids);
  const outcomes = new Map<string, FirstPrintOutcome>();
  const rendered: RenderedFirstPrint[] = [];
  for (const calibrationId of ids) {
    const row = sources.get(calibrationId);
    if (!row) {
      outcomes.set(calibrationId, {
        calibrationId,
        error: new Error(`calibration ${calibrationId} does not exist`),
      });
      continue;
    }
    if (row.cal.verdict === 'unusable' || row.firstPrintId) {
      outcomes.set(calibrationId, { calibrationId, travelerId: row.firstPrintId });
      continue;
    }
    try {
      const t0 = performance.now();
      const pdf = await renderTravelerPdf(travelerDataOf(row, 1, pageSize, now));
      const id = randomUUID();
      const event: LineEvent = {
        type: 'traveler.ready',
        stationId: row.cal.stationId,
        unitId: row.cal.unitId,
        serial: row.unit.serial,
        calibrationId,
        travelerId: id,
        at: now.toISOString(),
      };
      rendered.push({
        calibrationId,
        id,
        unitId: row.cal.unitId,
        pdf,
        renderMs: Math.round(performance.now() - t0),
        event: JSON.stringify(event),
      });
    } catch (err) {
      outcomes.set(calibrationId, { calibrationId, error: err as Error });
    }
  }
  const storeAll = (prints: RenderedFirstPrint[]) =>
    withTransaction(pool, async ({ client }) => {
      await lockCalibrations(
        client,
        prints.map((p) => p.calibrationId),
      );
      return storeFirstPrints(client, prints, pageSize, now);
    });
  const record = (prints: RenderedFirstPrint[], stored: Map<string, string>) => {
    for (const p of prints) {
      const travelerId = stored.get(p.calibrationId);
      outcomes.set(
        p.calibrationId,
        travelerId
          ? { calibrationId: p.calibrationId, travelerId }
          : {
              calibrationId: p.calibrationId,
              error: new Error(`print 1 of ${p.calibrationId} was not stored`),
            },
      );
    }
  };
  if (rendered.length) {
    try {
      record(rendered, await storeAll(rendered));
    } catch (err) {
      // One bad print must not keep the others: store each on its own.
      for (const p of rendered) {
        try {
          if (rendered.length === 1) throw err;
          record([p], await storeAll([p]));
        } catch (e) {
          outcomes.set(p.calibrationId, { calibrationId: p.calibrationId, error: e as Error });
        }
      }
    }
  }
  return calibrationIds.map((id) => outcomes.get(id)!);
}

/** Print 1 of one calibration (see renderFirstTravelers): its id, or null for an unusable calibration. */
export async function renderFirstTraveler(
  pool: pg.Pool,
  calibrationId: string,
  now: Date,
  pageSize: 'A4' | 'LETTER' = 'A4',
): Promise<string | null> {
  const [outcome] = await renderFirstTravelers(pool, [calibrationId], now, pageSize);
  if (outcome.error) throw outcome.error;
  return outcome.travelerId;
}

/**
 * The traveler of the unit's latest calibration with a verdict, newest document first. A calibration
 * whose print 1 was never rendered (the seeded demo history renders its travelers on first request, not
 * in thousands of jobs at start) gets it rendered now, once.
 */
export async function currentTraveler(
  deps: { db: Db; pool: pg.Pool },
  unitId: string,
  now: Date,
): Promise<TravelerRecord | undefined> {
  const { db } = deps;
  const latest = await latestJudgedCalibrationOfUnit(db, unitId);
  if (!latest) return undefined;
  const newest = () =>
    db
      .select()
      .from(travelers)
      .where(eq(travelers.calibrationId, latest.id))
      .orderBy(desc(travelers.createdAt))
      .limit(1);
  const [doc] = await newest();
  if (doc) return doc;
  await renderFirstTraveler(deps.pool, latest.id, now);
  return (await newest())[0];
}

/**
 * Prints the traveler of the unit's latest calibration: the first print uses (or renders) print 1,
 * every later one renders a reprint marked with its number. Every print is audited.
 */
export async function printTraveler(
  deps: { db: Db; pool: pg.Pool },
  actor: SessionUser,
  unitId: string,
  serial: string,
  pageSize: 'A4' | 'LETTER',
  now: Date,
): Promise<TravelerRecord> {
  const latest = await latestJudgedCalibrationOfUnit(deps.db, unitId);
  if (!latest) throw travelerErrors.none(serial);
  return withTransaction(deps.pool, async (t) => {
    const { tx } = t;
    await lockCalibrations(t.client, [latest.id]);
    const n = await countAuditOf(tx, {
      subjectType: 'calibration',
      subjectId: latest.id,
      actions: ['travelers.printed', 'travelers.reprinted'],
    });
    const printNumber = n + 1;
    let doc: TravelerRecord | undefined;
    const unitNow = await findUnitBySerial(tx, serial);
    // A unit put on hold after its first traveler was rendered gets a fresh one that says ON HOLD.
    if (printNumber === 1 && unitNow?.status !== 'on_hold') {
      [doc] = await tx
        .select()
        .from(travelers)
        .where(
          and(
            eq(travelers.calibrationId, latest.id),
            eq(travelers.printNumber, 1),
            eq(travelers.pageSize, pageSize),
          ),
        );
    }
    doc ??= await store(t, latest.id, unitId, printNumber, pageSize, actor.id, now);
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: printNumber === 1 ? 'travelers.printed' : 'travelers.reprinted',
      subjectType: 'calibration',
      subjectId: latest.id,
      after: { serial, travelerId: doc.id, printNumber, pageSize, sha256: doc.sha256 },
    });
    return doc;
  });
}
