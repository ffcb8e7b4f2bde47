import Papa from 'papaparse';
import type pg from 'pg';
import { pipeline } from 'node:stream/promises';
import type { Writable } from 'node:stream';
import { to as copyTo } from 'pg-copy-streams';
import { ANALYSIS_FIGURES, type AnalysisFilter } from '#shared/schemas/analysis';
import { calibrationsCsvStatement } from '../read-models/calibration-figures.repository';

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

/**
 * Writes the filtered calibrations as CSV (comma separated, a byte-order mark so spreadsheets read the
 * degree sign and names in UTF-8, units in the headers), in production order. The header comes from the CSV
 * library; the rows come straight from PostgreSQL's own CSV writer (COPY … TO STDOUT, quoting included),
 * streamed with back-pressure, so memory stays flat for any size and no row passes through JavaScript
 * objects. `pool` is the connection pool the statistics read from. Returns the rows written.
 */
export async function writeCalibrationsCsv(
  pool: pg.Pool,
  filter: AnalysisFilter,
  out: Writable,
): Promise<number> {
  const statement = calibrationsCsvStatement(filter);
  const header = '\uFEFF' + Papa.unparse([columns(filter)], { newline: '\n' }) + '\n';
  const client = await pool.connect();
  let failed: unknown;
  try {
    if (!out.write(header)) await new Promise((resolve) => out.once('drain', resolve));
    const copy = client.query(copyTo(`copy (${statement}) to stdout with (format csv)`));
    await pipeline(copy, out, { end: false });
    return copy.rowCount;
  } catch (err) {
    failed = err;
    throw err;
  } finally {
    // A copy cut off midway (the client went away) leaves the connection mid-protocol: discard it.
    client.release(failed instanceof Error ? failed : undefined);
  }
}
