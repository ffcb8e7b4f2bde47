import { createHash, randomUUID } from 'node:crypto';
import { travelerSettings } from '#server/env';
import { and, desc, eq, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { travelerErrors } from './travelers.errors';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import { countAuditOf, insertAudit } from '../audit/audit.repository';
import { latestJudgedCalibrationOfUnit } from '../calibrations/calibrations.repository';
import { travelerSource, type TravelerSource } from '../read-models/traveler-data.repository';
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
  db: DbOrTx,
  calibrationId: string,
  printNumber: number,
  pageSize: 'A4' | 'LETTER',
  generatedAt: Date,
): Promise<TravelerDataInput> {
  const row = await travelerSource(db, calibrationId);
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
    countsPerTurn: row.recipe.body.countsPerTurn,
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
      name: (row.recipe.body.name ?? row.model.code).replace(/[^A-Za-z0-9 ._\-/#+:]/g, '-'),
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
  db: DbOrTx,
  calibrationId: string,
  unitId: string,
  printNumber: number,
  pageSize: 'A4' | 'LETTER',
  requestedBy: string | null,
  now: Date,
): Promise<TravelerRecord> {
  const t0 = performance.now();
  const pdf = await renderTravelerPdf(await travelerData(db, calibrationId, printNumber, pageSize, now));
  const renderMs = Math.round(performance.now() - t0);
  const [row] = await db
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

/** A transaction lock on one calibration's travelers: prints of it take turns. */
async function lockCalibration(tx: DbOrTx, calibrationId: string): Promise<void> {
  await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`traveler:${calibrationId}`}, 0))`);
}

/**
 * The job: print 1 of a committed calibration's traveler, once (a second run finds it and stops). One
 * statement reads everything it prints; the page is rendered outside any transaction; then, under a
 * lock named after the calibration, one statement stores it (unless a concurrent run has) and announces
 * it: five round trips in all.
 */
export async function renderFirstTraveler(
  db: Db,
  calibrationId: string,
  now: Date,
  pageSize: 'A4' | 'LETTER' = 'A4',
) {
  const row = await travelerSource(db, calibrationId);
  if (!row) throw new Error(`calibration ${calibrationId} does not exist`);
  if (row.cal.verdict === 'unusable') return null;
  if (row.firstPrintId) return row.firstPrintId;
  const t0 = performance.now();
  const pdf = await renderTravelerPdf(travelerDataOf(row, 1, pageSize, now));
  const renderMs = Math.round(performance.now() - t0);
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
  return db.transaction(async (tx) => {
    // Serialise concurrent runs of the same job on a lock named after the calibration (a row lock
    // would need UPDATE on calibrations, which the app role does not have: the table is append-only).
    // The insert is a statement of its own after the lock, so its snapshot sees a concurrent run's print.
    await lockCalibration(tx, calibrationId);
    const { rows } = await tx.execute<{ id: string }>(sql`
      with existing as (
        select id from ${travelers} where calibration_id = ${calibrationId}::uuid and print_number = 1 limit 1
      ), ins as (
        insert into ${travelers} (id, unit_id, calibration_id, print_number, page_size, pdf, sha256, bytes, render_ms, created_at)
        select ${id}::uuid, ${row.cal.unitId}::uuid, ${calibrationId}::uuid, 1, ${pageSize}::page_size, ${pdf}::bytea,
          ${createHash('sha256').update(pdf).digest('hex')}, ${pdf.length}::int, ${renderMs}::int, ${now.toISOString()}::timestamptz
        where not exists (select 1 from existing)
        returning id
      )
      select id, (select pg_notify(${EVENTS_CHANNEL}, ${JSON.stringify(event)})) as notified from ins
      union all select id, null from existing`);
    return rows[0].id;
  });
}

/**
 * The traveler of the unit's latest calibration with a verdict, newest document first. A calibration
 * whose print 1 was never rendered (the seeded demo history renders its travelers on first request, not
 * in thousands of jobs at start) gets it rendered now, once.
 */
export async function currentTraveler(
  db: Db,
  unitId: string,
  now: Date,
): Promise<TravelerRecord | undefined> {
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
  await renderFirstTraveler(db, latest.id, now);
  return (await newest())[0];
}

/**
 * Prints the traveler of the unit's latest calibration: the first print uses (or renders) print 1,
 * every later one renders a reprint marked with its number. Every print is audited.
 */
export async function printTraveler(
  db: Db,
  actor: SessionUser,
  unitId: string,
  serial: string,
  pageSize: 'A4' | 'LETTER',
  now: Date,
): Promise<TravelerRecord> {
  const latest = await latestJudgedCalibrationOfUnit(db, unitId);
  if (!latest) throw travelerErrors.none(serial);
  return db.transaction(async (tx) => {
    await lockCalibration(tx, latest.id);
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
    doc ??= await store(tx, latest.id, unitId, printNumber, pageSize, actor.id, now);
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
