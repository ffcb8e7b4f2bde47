import Papa from 'papaparse';
import { inArray, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { unitErrors } from './units.errors';
import { insertAudit } from '../audit/audit.repository';
import { findModelRow, findModelWithActiveRecipe, listModelRows } from '../recipes/recipes.repository';
import { calibrationViews } from '../read-models/calibration-views';
import { listTravelerDocsOfUnit } from '../travelers/travelers.repository';
import {
  registerUnitSchema,
  type RegisterUnit,
  type UnitDetail,
  type UnitView,
} from '#shared/schemas/units';
import { serialSchema } from '#shared/schemas/serial';
import { type ImportReport, WORK_ORDER_COLUMNS } from '#shared/schemas/work-orders';
import { units, type UnitRecord } from './units.table';
import { normaliseSerial } from '#shared/schemas/serial';

export async function findUnitBySerial(db: DbOrTx, serial: string): Promise<UnitRecord | undefined> {
  const [row] = await db
    .select()
    .from(units)
    .where(sql`upper(${units.serial}) = ${normaliseSerial(serial)}`);
  return row;
}

export async function unitView(db: DbOrTx, unit: UnitRecord): Promise<UnitView> {
  const { model, recipe } = (await findModelWithActiveRecipe(db, unit.modelId))!;
  return {
    id: unit.id,
    serial: unit.serial,
    model: { id: model.id, code: model.code, name: model.name, polePairs: model.polePairs },
    workOrder: unit.workOrder,
    lots: { hallBoard: unit.hallBoardLot, magnetRing: unit.magnetRingLot, stator: unit.statorLot },
    status: unit.status,
    holdReason: unit.holdReason,
    attempts: unit.attempts,
    maxAttempts: recipe?.body.maxAttempts ?? null,
    currentOffsetDeg: unit.currentOffsetDeg,
    currentOffsetCounts: unit.currentOffsetCounts,
    programmingMismatch: unit.programmingMismatch,
    createdAt: unit.createdAt.toISOString(),
    updatedAt: unit.updatedAt.toISOString(),
  };
}

export async function unitDetail(db: DbOrTx, serial: string): Promise<UnitDetail> {
  const unit = await findUnitBySerial(db, serial);
  if (!unit) throw unitErrors.notFound(serial);
  const docs = await listTravelerDocsOfUnit(db, unit.id);
  return {
    unit: await unitView(db, unit),
    calibrations: await calibrationViews(db, { unitId: unit.id, limit: 100 }),
    travelers: docs.map((d) => ({ ...d, createdAt: d.createdAt.toISOString() })),
  };
}

export async function registerUnit(db: Db, actor: SessionUser, input: RegisterUnit): Promise<UnitView> {
  const v = registerUnitSchema.parse(input);
  const model = await findModelRow(db, v.modelId);
  if (!model) throw unitErrors.unknownModel();
  return db
    .transaction(async (tx) => {
      const [row] = await tx
        .insert(units)
        .values({
          serial: v.serial,
          modelId: v.modelId,
          workOrder: v.workOrder || null,
          hallBoardLot: v.hallBoardLot || null,
          magnetRingLot: v.magnetRingLot || null,
          statorLot: v.statorLot || null,
        })
        .returning();
      await insertAudit(tx, {
        actorId: actor.id,
        actorName: actor.displayName,
        action: 'units.registered',
        subjectType: 'unit',
        subjectId: row.id,
        after: { serial: row.serial, model: model.code },
      });
      return unitView(tx, row);
    })
    .catch((e: unknown) => {
      const err = e as { code?: string; cause?: { code?: string } };
      if ((err.code ?? err.cause?.code) === '23505') throw unitErrors.exists(v.serial);
      throw e;
    });
}

const IMPORT_COLUMNS = WORK_ORDER_COLUMNS;

/**
 * Imports units from a work-order CSV (header row; columns serial, model (code), and optionally
 * work_order, hall_board_lot, magnet_ring_lot, stator_lot). All or nothing: with any bad row the
 * report lists every bad row and nothing is imported.
 */
export async function importUnits(db: Db, actor: SessionUser, csvText: string): Promise<ImportReport> {
  const parsed = Papa.parse<Record<string, string>>(csvText.replace(/^\uFEFF/, ''), {
    header: true,
    skipEmptyLines: 'greedy',
    transformHeader: (h) =>
      h
        .trim()
        .toLowerCase()
        .replace(/[\s-]+/g, '_'),
  });
  const headers = parsed.meta.fields ?? [];
  const missing = ['serial', 'model'].filter((c) => !headers.includes(c));
  if (missing.length) {
    throw unitErrors.importColumns(missing, IMPORT_COLUMNS);
  }
  const errors: ImportReport['errors'] = [];
  for (const e of parsed.errors) errors.push({ row: (e.row ?? 0) + 2, serial: null, message: e.message });
  const modelRows = await listModelRows(db);
  const byCode = new Map(modelRows.map((m) => [m.code.toUpperCase(), m]));
  const seen = new Map<string, number>();
  const values: (typeof units.$inferInsert)[] = [];
  parsed.data.forEach((r, i) => {
    const line = i + 2;
    const serial = serialSchema.safeParse(r.serial ?? '');
    if (!serial.success) {
      errors.push({
        row: line,
        serial: r.serial || null,
        message: `serial: ${serial.error.issues[0].message}`,
      });
      return;
    }
    const key = serial.data;
    if (seen.has(key)) {
      errors.push({ row: line, serial: serial.data, message: `serial repeats row ${seen.get(key)}` });
      return;
    }
    seen.set(key, line);
    const model = byCode.get((r.model ?? '').trim().toUpperCase());
    if (!model) {
      errors.push({
        row: line,
        serial: serial.data,
        message: `model "${r.model ?? ''}" is not a known model code`,
      });
      return;
    }
    const lot = (v: string | undefined) => (v && v.trim() ? v.trim().slice(0, 64) : null);
    values.push({
      serial: serial.data,
      modelId: model.id,
      workOrder: lot(r.work_order),
      hallBoardLot: lot(r.hall_board_lot),
      magnetRingLot: lot(r.magnet_ring_lot),
      statorLot: lot(r.stator_lot),
    });
  });
  if (values.length) {
    const existing = await db
      .select({ serial: units.serial })
      .from(units)
      .where(
        inArray(
          sql`upper(${units.serial})`,
          values.map((v) => v.serial),
        ),
      );
    for (const e of existing) {
      errors.push({
        row: seen.get(normaliseSerial(e.serial)) ?? 0,
        serial: e.serial,
        message: 'a unit with this serial already exists',
      });
    }
  }
  errors.sort((a, b) => a.row - b.row);
  if (errors.length > 0) return { imported: 0, rows: parsed.data.length, errors };
  await db.transaction(async (tx) => {
    for (let i = 0; i < values.length; i += 500) await tx.insert(units).values(values.slice(i, i + 500));
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'units.imported',
      subjectType: 'unit',
      after: { count: values.length, first: values[0]?.serial, last: values.at(-1)?.serial },
    });
  });
  return { imported: values.length, rows: parsed.data.length, errors: [] };
}

/** Units registered per model (model id → count), for the recipe desk's model list. */
export async function countUnitsByModel(db: DbOrTx): Promise<Map<string, number>> {
  const rows = await db
    .select({ modelId: units.modelId, n: sql<number>`count(*)::int` })
    .from(units)
    .groupBy(units.modelId);
  return new Map(rows.map((r) => [r.modelId, r.n]));
}

/** Serials of the given units, by id (for logs that keep only an id). */
export async function serialsByIds(db: DbOrTx, ids: string[]): Promise<Map<string, string>> {
  if (ids.length === 0) return new Map();
  const rows = await db
    .select({ id: units.id, serial: units.serial })
    .from(units)
    .where(inArray(units.id, ids));
  return new Map(rows.map((r) => [r.id, r.serial]));
}

export interface ComponentLots {
  hallBoard: string | null;
  magnetRing: string | null;
  stator: string | null;
}

/** The component lots (hall board, magnet ring, stator) of the given units, by unit id. */
export async function componentLotsByIds(db: DbOrTx, ids: string[]): Promise<Map<string, ComponentLots>> {
  if (ids.length === 0) return new Map();
  const rows = await db
    .select({
      id: units.id,
      hallBoard: units.hallBoardLot,
      magnetRing: units.magnetRingLot,
      stator: units.statorLot,
    })
    .from(units)
    .where(inArray(units.id, ids));
  return new Map(rows.map(({ id, ...lots }) => [id, lots]));
}

/** How many units there are, and how many are on hold (the demo seed's report). */
export async function unitCounts(db: DbOrTx): Promise<{ units: number; onHold: number }> {
  const [u] = await db
    .select({
      units: sql<number>`count(*)::int`,
      onHold: sql<number>`count(*) filter (where ${units.status} = 'on_hold')::int`,
    })
    .from(units);
  return u;
}
