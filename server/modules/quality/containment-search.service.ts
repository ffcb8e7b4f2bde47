import type { Db } from '#server/db/client';
import { findRecipeRow, listModelRows, listRecipeRows } from '../recipes/recipes.repository';
import { listUsers } from '../users/users.repository';
import { ENGINE_VERSION } from '#shared/calibration/engine';
import { storedMeasurement } from '../measurements/measurements.repository';
import { CalibrationInputError } from '#shared/calibration';
import { traceMeasurement } from '#shared/calibration/trace';
import type { Measurement } from '#shared/schemas/measurement';
import { searchUnitsPage, streamSearchRows } from '../units/units.repository';
import type {
  MeasurementTrace,
  SearchChoices,
  UnitSearchPage,
  UnitSearchQuery,
} from '#shared/schemas/quality';
import { qualityErrors } from './quality.errors';
import { searchWhere } from './quality.service';

// The containment search: one page, its choices, its CSV, and the raw data behind a found unit's numbers.

/** One page of a containment search with the total count. */
export async function searchUnits(db: Db, q: UnitSearchQuery): Promise<UnitSearchPage> {
  const { rows, total } = await searchUnitsPage(db, q, searchWhere(q));
  const models = new Map((await listModelRows(db)).map((m) => [m.id, m.code]));
  return {
    rows: rows.map(({ modelId, ...r }) => ({
      ...r,
      modelCode: models.get(modelId) ?? '',
      createdAt: r.createdAt.toISOString(),
      updatedAt: r.updatedAt.toISOString(),
    })),
    total,
    page: q.page,
    pageSize: q.pageSize,
  };
}

/**
 * The search form's lists the line's own lists do not give: people who may stand at a panel (by
 * name), every recipe version that was released, and the engine versions.
 */
export async function searchChoices(db: Db): Promise<SearchChoices> {
  const [people, recipes, models] = await Promise.all([listUsers(db), listRecipeRows(db), listModelRows(db)]);
  const codes = new Map(models.map((m) => [m.id, m.code]));
  return {
    operators: people
      .filter((p) => p.role !== 'admin')
      .map((p) => ({ id: p.id, name: p.displayName }))
      .sort((a, b) => a.name.localeCompare(b.name)),
    recipes: recipes
      .filter((r) => r.status === 'released' || r.status === 'retired')
      .map((r) => ({ id: r.id, modelCode: codes.get(r.modelId) ?? '', version: r.version, status: r.status }))
      .sort((a, b) => a.modelCode.localeCompare(b.modelCode) || b.version - a.version),
    engineVersions: [ENGINE_VERSION],
  };
}

const CSV_COLUMNS = [
  'serial',
  'model',
  'work_order',
  'hall_board_lot',
  'magnet_ring_lot',
  'stator_lot',
  'status',
  'hold_reason',
  'attempts',
  'offset_deg',
  'programming_mismatch',
  'registered_at',
  'updated_at',
];

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = String(v);
  // A leading = + - @ would be read as a formula by a spreadsheet.
  const safe = /^[=+\-@]/.test(s) && !/^-?\d/.test(s) ? `'${s}` : s;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/**
 * The whole result of a search as CSV, in the search's order, read through one cursor 2,000 rows at a
 * time and handed to `write` as it comes, so memory stays flat however many units match.
 */
export async function exportSearchCsv(
  db: Db,
  q: UnitSearchQuery,
  write: (chunk: string) => Promise<void> | void,
): Promise<number> {
  const models = new Map((await listModelRows(db)).map((m) => [m.id, m.code]));
  await write(CSV_COLUMNS.join(',') + '\r\n');
  let n = 0;
  await streamSearchRows(db, q, searchWhere(q), 2000, async (rows) => {
    const lines = rows.map((r) =>
      [
        r.serial,
        models.get(r.model_id) ?? '',
        r.work_order,
        r.hall_board_lot,
        r.magnet_ring_lot,
        r.stator_lot,
        r.status,
        r.hold_reason,
        r.attempts,
        r.current_offset_deg,
        r.programming_mismatch,
        r.created_at,
        r.updated_at,
      ]
        .map(csvCell)
        .join(','),
    );
    n += lines.length;
    await write(lines.join('\r\n') + '\r\n');
  });
  return n;
}

/** The raw data behind a measurement's numbers (see `traceMeasurement`), with its stored hash. */
export async function measurementTrace(db: Db, measurementId: string): Promise<MeasurementTrace> {
  const m = await storedMeasurement(db, measurementId);
  if (!m) throw qualityErrors.measurementNotFound(measurementId);
  const recipe = m.recipeId ? await findRecipeRow(db, m.recipeId) : undefined;
  let segments: MeasurementTrace['segments'] = [];
  let problem: string | null = null;
  if (!recipe) problem = 'This measurement has no station result yet, so there is no recipe to read it with.';
  else {
    try {
      segments = traceMeasurement(m.payload as Measurement, recipe.body);
    } catch (e) {
      if (!(e instanceof CalibrationInputError)) throw e;
      problem = `The data could not be used: ${e.message}`;
    }
  }
  return {
    measurementId: m.measurementId,
    serial: m.serial,
    source: m.source,
    receivedAt: m.receivedAt.toISOString(),
    payloadSha256: m.payloadSha256,
    recipe: recipe ? { id: recipe.id, version: recipe.version, body: recipe.body } : null,
    segments,
    problem,
  };
}

/** The measurement exactly as the station posted it (JSON text or capture CSV). */
export async function measurementAsPosted(db: Db, measurementId: string) {
  const m = await storedMeasurement(db, measurementId);
  if (!m) throw qualityErrors.measurementNotFound(measurementId);
  return {
    text: m.payloadRaw ?? JSON.stringify(m.payload),
    contentType: m.source === 'capture' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8',
    fileName: `${m.serial}-${m.measurementId}.${m.source === 'capture' ? 'csv' : 'json'}`,
    payloadSha256: m.payloadSha256,
  };
}
