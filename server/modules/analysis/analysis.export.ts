import Papa from 'papaparse';
import type { Writable } from 'node:stream';
import type { DbOrTx } from '../../db/client';
import { ANALYSIS_FIGURES, type AnalysisFilter } from '../../../shared/schemas/analysis';
import { selectCalibrationFigures, type CalibrationFigureRow } from '../measurements/calibrations.repository';

/** Rows read per query; the response is written page by page, so memory stays flat for any size. */
const PAGE = 5000;

function columns(filter: AnalysisFilter) {
  const f = ANALYSIS_FIGURES[filter.figure];
  return [
    'Serial',
    'Station',
    'Computed at (UTC)',
    'Verdict',
    'Attempt',
    'Recipe version',
    `${f.label} (${f.unit === '°' ? 'electrical degrees' : f.unit})`,
    'Hall-board lot',
    'Magnet-ring lot',
    'Stator lot',
    'Operator',
  ];
}

function row(r: CalibrationFigureRow) {
  return [
    r.serial,
    r.stationName,
    r.computedAt.toISOString(),
    r.verdict,
    r.attempt ?? '',
    r.recipeVersion,
    r.value,
    r.hallBoardLot ?? '',
    r.magnetRingLot ?? '',
    r.statorLot ?? '',
    r.operatorName ?? '',
  ];
}

/** Waits for the socket to drain when its buffer is full (back-pressure), so a slow client costs no memory. */
function write(out: Writable, chunk: string): Promise<void> {
  return new Promise((resolve, reject) => {
    if (out.write(chunk)) resolve();
    else {
      out.once('drain', resolve);
      out.once('error', reject);
    }
  });
}

/**
 * Writes the filtered calibrations as CSV (comma separated, a byte-order mark so spreadsheets read the
 * degree sign and names in UTF-8, units in the headers), in production order. Returns the rows written.
 */
export async function writeCalibrationsCsv(
  db: DbOrTx,
  filter: AnalysisFilter,
  out: Writable,
): Promise<number> {
  await write(out, '\uFEFF' + Papa.unparse([columns(filter)]) + '\r\n');
  let after: { at: Date; id: string } | undefined;
  let written = 0;
  for (;;) {
    const { rows } = await selectCalibrationFigures(db, filter, { after, limit: PAGE });
    if (rows.length === 0) break;
    await write(out, Papa.unparse(rows.map(row), { header: false }) + '\r\n');
    written += rows.length;
    const last = rows[rows.length - 1];
    after = { at: last.computedAt, id: last.calibrationId };
    if (rows.length < PAGE) break;
  }
  return written;
}
