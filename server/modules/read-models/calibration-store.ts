// Over ~350 lines on purpose: loading, catching up and selecting share the partition's column layout; apart,
// each half would have to know the other's private arrays.
import pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import type { DbOrTx } from '#server/db/client';
import type { AnalysisFigure, AnalysisFilter } from '#shared/schemas/analysis';

/**
 * The line statistics' rows kept in memory, column by column. A whole-model view over a million
 * calibrations needs every value of the selection in production order (moving ranges, quartiles, box
 * figures, ranks); PostgreSQL reads, sorts and windows them again for every request, which takes seconds.
 * Here each (model, purpose) is read once from calibration_stats, in production order (computed_at, then
 * calibration id, as the SQL path orders them), into typed arrays: about 60 bytes a calibration, plus 8 per
 * figure asked for (a figure's column is read the first time a view asks for it).
 *
 * Staying current: every row of calibration_stats carries the id of the transaction that wrote its version
 * (`changed_xid`, migration 0023). Before answering, the store opens a repeatable-read transaction, takes its
 * snapshot, and reads only the rows whose writer it had not seen in its previous snapshot (from that
 * snapshot's xmin on, along an index; a row is new to it exactly when its writer was not visible then). New
 * rows go in at their place in production order (nearly always the end), rewritten rows (a corrected lot)
 * replace their old version. Calibrations are append-only (the database refuses DELETE and TRUNCATE even to
 * its owner), so rows never leave. The answer is therefore what the SQL path would read in that snapshot,
 * from a streaming replica as well as from the primary.
 *
 * Used for reads through a connection pool; inside a transaction the SQL path answers (it sees that
 * transaction's own writes). STATISTICS_IN_MEMORY=0 turns it off (see server/env.ts).
 */

export const FIGURE_COLUMNS: Record<AnalysisFigure, string> = {
  offsetDeg: 'offset_deg',
  lagDeg: 'lag_deg',
  speedRpm: 'speed_rpm',
  fitResidualDeg: 'fit_residual_deg',
  keVPerKrpm: 'ke_v_per_krpm',
  placementADeg: 'placement_a_deg',
  placementBDeg: 'placement_b_deg',
  placementCDeg: 'placement_c_deg',
};
const FIGURES = Object.keys(FIGURE_COLUMNS) as AnalysisFigure[];

const ROW_COLUMNS = `calibration_id, computed_at, model_id, purpose::text, station_id, operator_id, verdict::text,
  attempt, recipe_version, hall_board_lot, magnet_ring_lot, stator_lot`;
const ALL_FIGURES = FIGURES.map((f) => FIGURE_COLUMNS[f]).join(', ');

/**
 * Codes for the repeated strings (station and operator ids, lots, verdicts): each distinct string once. Rows
 * are coded from their raw bytes, found by a hash of them, so reading a million rows makes no string per row.
 */
export class Dictionary {
  readonly values: string[] = [];
  private readonly codes = new Map<string, number>();
  private readonly byHash = new Map<number, { bytes: Buffer; code: number }[]>();
  constructor(private readonly asUuid = false) {}
  code(value: string): number {
    let c = this.codes.get(value);
    if (c === undefined) {
      c = this.values.length;
      this.values.push(value);
      this.codes.set(value, c);
    }
    return c;
  }
  find(value: string): number | undefined {
    return this.codes.get(value);
  }
  /** The code of the string in buf[at, at + length) (UTF-8 text, or a uuid's 16 bytes). */
  codeOfBytes(buf: Buffer, at: number, length: number): number {
    let h = 0x811c9dc5;
    for (let k = at; k < at + length; k++) h = Math.imul(h ^ buf[k], 0x01000193);
    let bucket = this.byHash.get(h);
    if (bucket)
      for (const e of bucket) {
        if (e.bytes.length !== length) continue;
        let same = true;
        for (let k = 0; k < length && same; k++) same = e.bytes[k] === buf[at + k];
        if (same) return e.code;
      }
    else this.byHash.set(h, (bucket = []));
    const bytes = Buffer.from(buf.subarray(at, at + length));
    const code = this.code(this.asUuid ? hyphenate(bytes.toString('hex')) : bytes.toString('utf8'));
    bucket.push({ bytes, code });
    return code;
  }
}

/** One decoded row of calibration_stats (figures NaN when not recorded, codes -1 when null). */
interface DecodedRow {
  id: Uint32Array; // 4 words, big-endian order of the uuid's bytes
  t: number; // µs since 2000-01-01 UTC
  model: string;
  purpose: string;
  station: number;
  operator: number;
  verdict: number;
  attempt: number;
  recipeVersion: number;
  hall: number;
  magnet: number;
  stator: number;
  figures: Float64Array | null;
}

const emptyRow = (withFigures: boolean): DecodedRow => ({
  id: new Uint32Array(4),
  t: 0,
  model: '',
  purpose: '',
  station: -1,
  operator: -1,
  verdict: -1,
  attempt: -1,
  recipeVersion: 0,
  hall: -1,
  magnet: -1,
  stator: -1,
  figures: withFigures ? new Float64Array(FIGURES.length) : null,
});

/** PostgreSQL's epoch (2000-01-01) in Unix µs. */
const PG_EPOCH_US = 946_684_800_000_000;

export const fromUnixMs = (ms: number) => ms * 1000 - PG_EPOCH_US;

/**
 * The rows one catch-up added to a partition, for the selections and sorted orders computed before it: they
 * take in the new rows instead of starting again. `shifts[k]` is the final place of the k-th new row (in
 * production order) minus k, so an older row at place j moves to j + (how many shifts are ≤ j).
 */
export interface Change {
  /** The partition's length before the change. */
  before: number;
  shifts: Int32Array;
  /** The new rows' times and ids, to find them again after later changes. */
  t: Float64Array;
  ids: Uint32Array;
}

/** Where a row at place j before the change is after it. */
export function movedBy(change: Change, j: number): number {
  const d = change.shifts;
  if (d.length === 0 || j < d[0]) return j;
  let lo = 0;
  let hi = d.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (d[mid] <= j) lo = mid + 1;
    else hi = mid;
  }
  return j + lo;
}

/** A figure's values' places in ascending order of value (rows without one left out), as of change `seen`. */
export interface SortedOrder {
  seen: number;
  /** Room for more: the first `n` are the order. */
  order: Int32Array;
  /** The values in that order (read along it without jumping about memory). */
  values: Float64Array;
  n: number;
}

/** Changes kept per partition (older consumers start again from the rows). */
const MAX_CHANGES = 256;
const MAX_CHANGED_ROWS = 200_000;

/** A column of codes: 16 bits until a code needs more. */
export type Codes = Int16Array | Int32Array;

/** The column itself, or a 32-bit copy of it when `code` does not fit in 16 bits. */
export function fitted(column: Codes, code: number): Codes {
  if (column instanceof Int32Array || (code >= -32768 && code <= 32767)) return column;
  return Int32Array.from(column);
}

/** The rows of one model and purpose, in production order, as columns. */
export class Partition {
  length = 0;
  /**
   * Changes in order, the first being number `changesFrom`; null for one that rewrote or removed rows (what
   * was computed before it cannot be carried over).
   */
  private changes: (Change | null)[] = [];
  private changesFrom = 0;
  private changedRows = 0;
  /** What the catch-up under way has done: rows added (time, id), or a rewrite. */
  private pending: { t: number[]; ids: number[]; rewrote: boolean } | null = null;
  /** Sorted orders of the figures' values (calibration-store.figures.ts keeps them current). */
  readonly orders = new Map<AnalysisFigure, SortedOrder>();

  /** The number of the next change: what a consumer saw when it last looked. */
  get changeCount(): number {
    return this.changesFrom + this.changes.length;
  }

  /** The changes after `seen`, or null when the consumer must start again from the rows. */
  changesSince(seen: number): Change[] | null {
    if (seen < this.changesFrom || seen > this.changeCount) return null;
    const out: Change[] = [];
    for (let k = seen - this.changesFrom; k < this.changes.length; k++) {
      const c = this.changes[k];
      if (c === null) return null;
      out.push(c);
    }
    return out;
  }

  private note(): { t: number[]; ids: number[]; rewrote: boolean } {
    return (this.pending ??= { t: [], ids: [], rewrote: false });
  }

  /** Ends a catch-up: what it did becomes one change. */
  settle(): void {
    const p = this.pending;
    this.pending = null;
    if (!p) return;
    let change: Change | null = null;
    if (!p.rewrote) {
      const m = p.t.length;
      const places = new Int32Array(m);
      const id = new Uint32Array(4);
      for (let k = 0; k < m; k++) {
        for (let w = 0; w < 4; w++) id[w] = p.ids[4 * k + w];
        places[k] = this.indexOf(p.t[k], id);
      }
      // The new rows in production order, then their places minus their rank among them.
      const byPlace = Array.from({ length: m }, (_, k) => k).sort((a, b) => places[a] - places[b]);
      const shifts = new Int32Array(m);
      const t = new Float64Array(m);
      const ids = new Uint32Array(4 * m);
      byPlace.forEach((k, rank) => {
        shifts[rank] = places[k] - rank;
        t[rank] = p.t[k];
        for (let w = 0; w < 4; w++) ids[4 * rank + w] = p.ids[4 * k + w];
      });
      change = { before: this.length - m, shifts, t, ids };
      this.changedRows += m;
    }
    this.changes.push(change);
    while (
      this.changes.length > MAX_CHANGES ||
      (this.changedRows > MAX_CHANGED_ROWS && this.changes.length > 1)
    ) {
      const dropped = this.changes.shift();
      this.changedRows -= dropped?.t.length ?? 0;
      this.changesFrom += 1;
    }
  }

  /** Current places of the rows a list of changes added, ascending. */
  placesOfAdded(changes: Change[]): Int32Array {
    let m = 0;
    for (const c of changes) m += c.t.length;
    const out = new Int32Array(m);
    const id = new Uint32Array(4);
    let k = 0;
    for (const c of changes)
      for (let r = 0; r < c.t.length; r++) {
        for (let w = 0; w < 4; w++) id[w] = c.ids[4 * r + w];
        out[k++] = this.indexOf(c.t[r], id);
      }
    return out.sort();
  }

  /** Rows expected (the first read sizes its arrays from a count, with room for a day's growth). */
  constructor(expected = 0) {
    if (expected > 0) this.grow(expected + Math.min(100_000, Math.ceil(expected * 0.02)) + 1024);
  }
  private capacity = 0;
  ids = new Uint32Array(0);
  t = new Float64Array(0);
  // Codes (dictionary codes, -1 where not recorded; attempt and recipe version as numbers) in 16 bits: a model's
  // stations, operators and lots number in the hundreds or thousands, not tens of thousands. A column whose code
  // outgrows 16 bits is widened to 32 on the spot (`write`).
  station: Codes = new Int16Array(0);
  operator: Codes = new Int16Array(0);
  verdict = new Uint8Array(0);
  attempt: Codes = new Int16Array(0);
  recipeVersion: Codes = new Int16Array(0);
  hall: Codes = new Int16Array(0);
  magnet: Codes = new Int16Array(0);
  stator: Codes = new Int16Array(0);
  /** The figures read so far (a column per figure, NaN where the calibration has none). */
  readonly figures = new Map<AnalysisFigure, Float64Array>();

  private grow(min: number) {
    if (min <= this.capacity) return;
    const cap = Math.max(min, Math.ceil(this.capacity * 1.5), 1024);
    const widen = <T extends Float64Array | Codes | Uint8Array | Uint32Array>(a: T, per = 1): T => {
      const b = new (a.constructor as new (n: number) => T)(cap * per);
      b.set(a.subarray(0, this.length * per));
      return b;
    };
    this.ids = widen(this.ids, 4);
    this.t = widen(this.t);
    this.station = widen(this.station);
    this.operator = widen(this.operator);
    this.verdict = widen(this.verdict);
    this.attempt = widen(this.attempt);
    this.recipeVersion = widen(this.recipeVersion);
    this.hall = widen(this.hall);
    this.magnet = widen(this.magnet);
    this.stator = widen(this.stator);
    for (const [f, col] of this.figures) this.figures.set(f, widen(col));
    this.capacity = cap;
  }

  /** Compares row i with (t, id) in production order. */
  private compare(i: number, t: number, id: Uint32Array): number {
    if (this.t[i] !== t) return this.t[i] < t ? -1 : 1;
    for (let k = 0; k < 4; k++) {
      const a = this.ids[i * 4 + k];
      if (a !== id[k]) return a < id[k] ? -1 : 1;
    }
    return 0;
  }

  /** The first place whose row is not before (t, id). */
  private place(t: number, id: Uint32Array): number {
    let lo = 0;
    let hi = this.length;
    // Nearly every new row goes last.
    if (hi > 0 && this.compare(hi - 1, t, id) < 0) return hi;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.compare(mid, t, id) < 0) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  /** Where the row (t, id) is, or -1. */
  indexOf(t: number, id: Uint32Array): number {
    const i = this.place(t, id);
    return i < this.length && this.compare(i, t, id) === 0 ? i : -1;
  }

  /** Writes a row at its place (replacing the row with its id and time, if there is one). */
  put(row: DecodedRow): void {
    const i = this.place(row.t, row.id);
    const note = this.note();
    if (!(i < this.length && this.compare(i, row.t, row.id) === 0)) {
      this.grow(this.length + 1);
      if (i < this.length) this.shiftUp(i);
      this.length += 1;
      note.t.push(row.t);
      for (let w = 0; w < 4; w++) note.ids.push(row.id[w]);
    } else note.rewrote = true;
    this.write(i, row);
  }

  /** Appends a row read in production order (the first read of a partition). */
  append(row: DecodedRow): void {
    this.grow(this.length + 1);
    this.write(this.length, row);
    this.length += 1;
  }

  remove(i: number): void {
    this.note().rewrote = true;
    const move = <T extends Float64Array | Codes | Uint8Array | Uint32Array>(a: T, per = 1) =>
      a.copyWithin(i * per, (i + 1) * per, this.length * per);
    move(this.ids, 4);
    for (const a of this.columns()) move(a);
    for (const col of this.figures.values()) move(col);
    this.length -= 1;
  }

  private columns() {
    return [
      this.t,
      this.station,
      this.operator,
      this.verdict,
      this.attempt,
      this.recipeVersion,
      this.hall,
      this.magnet,
      this.stator,
    ];
  }

  private shiftUp(i: number) {
    const move = <T extends Float64Array | Codes | Uint8Array | Uint32Array>(a: T, per = 1) =>
      a.copyWithin((i + 1) * per, i * per, this.length * per);
    move(this.ids, 4);
    for (const a of this.columns()) move(a);
    for (const col of this.figures.values()) move(col);
  }

  private write(i: number, r: DecodedRow) {
    this.ids.set(r.id, i * 4);
    this.t[i] = r.t;
    this.station = fitted(this.station, r.station);
    this.station[i] = r.station;
    this.operator = fitted(this.operator, r.operator);
    this.operator[i] = r.operator;
    this.verdict[i] = r.verdict;
    this.attempt = fitted(this.attempt, r.attempt);
    this.attempt[i] = r.attempt;
    this.recipeVersion = fitted(this.recipeVersion, r.recipeVersion);
    this.recipeVersion[i] = r.recipeVersion;
    this.hall = fitted(this.hall, r.hall);
    this.hall[i] = r.hall;
    this.magnet = fitted(this.magnet, r.magnet);
    this.magnet[i] = r.magnet;
    this.stator = fitted(this.stator, r.stator);
    this.stator[i] = r.stator;
    if (r.figures)
      for (let k = 0; k < FIGURES.length; k++) {
        const col = this.figures.get(FIGURES[k]);
        if (col) col[i] = r.figures[k];
      }
  }

  /** Adds a figure's column, its values in production order. */
  setFigure(figure: AnalysisFigure, values: Float64Array): void {
    const col = new Float64Array(Math.max(this.capacity, values.length));
    col.set(values);
    this.figures.set(figure, col);
  }
}

/** Streams `COPY (query) TO STDOUT (FORMAT binary)` and hands each row's fields to `onRow`. */
async function copyBinary(
  client: pg.PoolClient,
  query: string,
  onRow: (buf: Buffer, starts: Int32Array, lengths: Int32Array) => void,
): Promise<number> {
  const stream = client.query(copyTo(`copy (${query}) to stdout (format binary)`));
  let pending: Buffer = Buffer.alloc(0);
  let headerDone = false;
  let ended = false;
  let rows = 0;
  let starts = new Int32Array(32);
  let lengths = new Int32Array(32);
  for await (const chunk of stream as AsyncIterable<Buffer>) {
    const buf = pending.length ? Buffer.concat([pending, chunk]) : chunk;
    let at = 0;
    if (!headerDone) {
      if (buf.length < 19) {
        pending = buf;
        continue;
      }
      if (buf.toString('latin1', 0, 11) !== 'PGCOPY\n\xff\r\n\0')
        throw new Error('calibration store: not a binary COPY stream');
      at = 19 + buf.readInt32BE(15);
      headerDone = true;
    }
    for (;;) {
      if (buf.length - at < 2) break;
      const fields = buf.readInt16BE(at);
      if (fields === -1) {
        at += 2;
        ended = true;
        break;
      }
      if (fields > starts.length) {
        starts = new Int32Array(fields);
        lengths = new Int32Array(fields);
      }
      let p = at + 2;
      let complete = true;
      for (let f = 0; f < fields; f++) {
        if (buf.length - p < 4) {
          complete = false;
          break;
        }
        const len = buf.readInt32BE(p);
        p += 4;
        if (len > 0 && buf.length - p < len) {
          complete = false;
          break;
        }
        starts[f] = p;
        lengths[f] = len;
        if (len > 0) p += len;
      }
      if (!complete) break;
      onRow(buf, starts, lengths);
      rows += 1;
      at = p;
    }
    pending = at < buf.length ? Buffer.from(buf.subarray(at)) : Buffer.alloc(0);
  }
  if (!ended || pending.length > 0) throw new Error('calibration store: the COPY stream ended early');
  return rows;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

/** Process-wide store of one database (one per connection pool). */
export class CalibrationStore {
  readonly stations = new Dictionary(true);
  readonly operators = new Dictionary(true);
  readonly lots = new Dictionary();
  readonly verdicts = new Dictionary();
  private readonly partitions = new Map<string, Partition>();
  private snapshot: string | null = null;
  /**
   * The newest filters' selections (several views of one page share a filter; the next look takes in only
   * the rows added since), most recently used last.
   */
  readonly selections = new Map<string, SelectionState>();
  /** Room the comparisons reuse (calibration-store.figures.ts, groupsOf). */
  readonly groupScratch = { values: new Float64Array(0), tag: new Uint16Array(0) };
  private queue: Promise<unknown> = Promise.resolve();

  constructor(private readonly pool: pg.Pool) {}

  /** The partition of a model and purpose, current as of now, with the figure's column read. */
  current(modelId: string, purpose: string, figure: AnalysisFigure): Promise<Partition> {
    // Both go into COPY statements, which take no parameters: only a uuid and a plain word pass.
    const model = modelId.toLowerCase();
    if (!UUID.test(model) || !/^[a-z_]+$/.test(purpose) || !(figure in FIGURE_COLUMNS))
      return Promise.reject(new Error(`calibration store: bad selection ${modelId}/${purpose}/${figure}`));
    const next = this.queue.then(() => this.catchUp(model, purpose, figure));
    this.queue = next.catch(() => undefined);
    return next;
  }

  /** Reads a row's fields into `row` (reused from row to row). */
  private decode(buf: Buffer, s: Int32Array, l: Int32Array, row: DecodedRow, full: boolean): DecodedRow {
    for (let k = 0; k < 4; k++) row.id[k] = buf.readUInt32BE(s[0] + 4 * k);
    row.t = Number(buf.readBigInt64BE(s[1]));
    if (full) {
      row.model = hyphenate(buf.toString('hex', s[2], s[2] + 16));
      row.purpose = buf.toString('utf8', s[3], s[3] + l[3]);
    }
    row.station = this.stations.codeOfBytes(buf, s[4], 16);
    row.operator = l[5] < 0 ? -1 : this.operators.codeOfBytes(buf, s[5], 16);
    row.verdict = this.verdicts.codeOfBytes(buf, s[6], l[6]);
    row.attempt = l[7] < 0 ? -1 : buf.readInt32BE(s[7]);
    row.recipeVersion = buf.readInt32BE(s[8]);
    row.hall = l[9] < 0 ? -1 : this.lots.codeOfBytes(buf, s[9], l[9]);
    row.magnet = l[10] < 0 ? -1 : this.lots.codeOfBytes(buf, s[10], l[10]);
    row.stator = l[11] < 0 ? -1 : this.lots.codeOfBytes(buf, s[11], l[11]);
    if (row.figures)
      for (let k = 0; k < FIGURES.length; k++) {
        const f = 12 + k;
        row.figures[k] = l[f] < 0 ? NaN : buf.readDoubleBE(s[f]);
      }
    return row;
  }

  private async catchUp(model: string, purpose: string, figure: AnalysisFigure): Promise<Partition> {
    const client = await this.pool.connect();
    let failed: unknown;
    try {
      await client.query('begin isolation level repeatable read read only');
      const { rows } = await client.query<{ snap: string }>('select pg_current_snapshot()::text as snap');
      const snap = rows[0].snap;
      if (this.snapshot !== null && this.partitions.size > 0) await this.readChanges(client, this.snapshot);
      const key = `${model}/${purpose}`;
      let part = this.partitions.get(key);
      if (!part) {
        const where = `model_id = '${model}' and purpose = '${purpose}'`;
        const counted = await client.query<{ n: number }>(
          `select count(*)::int as n from calibration_stats where ${where}`,
        );
        const fresh = new Partition(counted.rows[0].n);
        const row = emptyRow(false);
        await copyBinary(
          client,
          `select ${ROW_COLUMNS} from calibration_stats where model_id = '${model}' and purpose = '${purpose}'
           order by computed_at, calibration_id`,
          (buf, s, l) => fresh.append(this.decode(buf, s, l, row, false)),
        );
        this.partitions.set(key, (part = fresh));
      }
      if (!part.figures.has(figure)) await this.readFigure(client, part, model, purpose, figure);
      await client.query('commit');
      this.snapshot = snap;
      return part;
    } catch (err) {
      failed = err;
      // A half-applied catch-up leaves nothing to trust: start again from the database next time.
      this.partitions.clear();
      this.snapshot = null;
      this.selections.clear();
      throw err;
    } finally {
      client.release(failed instanceof Error ? failed : undefined);
    }
  }

  /** Applies the rows written by transactions the previous snapshot did not see. */
  private async readChanges(client: pg.PoolClient, previous: string) {
    const row = emptyRow(true);
    const prev = `'${previous.replace(/'/g, '')}'::pg_snapshot`;
    await copyBinary(
      client,
      `select ${ROW_COLUMNS}, ${ALL_FIGURES} from calibration_stats
       where changed_xid >= pg_snapshot_xmin(${prev}) and not pg_visible_in_snapshot(changed_xid, ${prev})`,
      (buf, s, l) => {
        this.decode(buf, s, l, row, true);
        const key = `${row.model}/${row.purpose}`;
        // A unit moved to another model takes its rows along.
        for (const [k, p] of this.partitions) {
          if (k === key) continue;
          const i = p.indexOf(row.t, row.id);
          if (i >= 0) p.remove(i);
        }
        this.partitions.get(key)?.put(row);
      },
    );
    for (const p of this.partitions.values()) p.settle();
  }

  private async readFigure(
    client: pg.PoolClient,
    part: Partition,
    model: string,
    purpose: string,
    figure: AnalysisFigure,
  ) {
    const values = new Float64Array(part.length);
    let i = 0;
    await copyBinary(
      client,
      `select ${FIGURE_COLUMNS[figure]} from calibration_stats where model_id = '${model}' and purpose = '${purpose}'
       order by computed_at, calibration_id`,
      (buf, s, l) => {
        if (i < values.length) values[i] = l[0] < 0 ? NaN : buf.readDoubleBE(s[0]);
        i += 1;
      },
    );
    if (i !== part.length)
      throw new Error(`calibration store: ${i} values of ${figure} for ${part.length} rows; reading again`);
    part.setFigure(figure, values);
  }
}

function hyphenate(hex: string): string {
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
}

const stores = new WeakMap<pg.Pool, CalibrationStore>();
let enabled = true;

/** Turns the store on or off for this process (STATISTICS_IN_MEMORY; the benchmark compares both). */
export function useCalibrationStore(on: boolean): void {
  enabled = on;
}

/** The store behind a database handle, or null inside a transaction (or when turned off). */
export function calibrationStoreOf(db: DbOrTx): CalibrationStore | null {
  if (!enabled) return null;
  const client = (db as { $client?: unknown }).$client;
  if (!(client instanceof pg.Pool)) return null;
  let store = stores.get(client);
  if (!store) stores.set(client, (store = new CalibrationStore(client)));
  return store;
}

/** The rows a filter selects: positions in production order, into the partition's current columns. */
export interface Selection {
  part: Partition;
  values: Float64Array;
  /** Positions of the selected rows in production order. */
  at: Int32Array;
  n: number;
}

/** A filter's selection as of a partition's change `seen`, with room to take in more rows. */
interface SelectionState {
  part: Partition;
  seen: number;
  at: Int32Array;
  n: number;
  selection: Selection | null;
}

function allowed(dict: Dictionary, wanted: readonly string[] | undefined, ids = false): Uint8Array | null {
  if (!wanted) return null;
  const out = new Uint8Array(dict.values.length + 1);
  for (const w of wanted) {
    const c = dict.find(ids ? w.toLowerCase() : w);
    if (c !== undefined) out[c] = 1;
  }
  return out;
}

/** Whether a row passes the filter (has a value of its figure, and every condition), with today's codes. */
// Reads the fields selectRows keys its selections by: a new condition goes in both.
function rowTest(
  store: CalibrationStore,
  part: Partition,
  f: AnalysisFilter,
  window: { fromMs?: number; toMs?: number },
): (i: number) => boolean {
  const values = part.figures.get(f.figure)!;
  const st = allowed(store.stations, f.stations, true);
  const op = allowed(store.operators, f.operators, true);
  const hb = allowed(store.lots, f.hallBoardLots);
  const mr = allowed(store.lots, f.magnetRingLots);
  const sl = allowed(store.lots, f.statorLots);
  const versions = f.recipeVersions ? new Set(f.recipeVersions) : null;
  const verdicts = new Uint8Array(store.verdicts.values.length + 1);
  for (const v of f.verdict === 'all' ? ['pass', 'fail'] : [f.verdict]) {
    const c = store.verdicts.find(v);
    if (c !== undefined) verdicts[c] = 1;
  }
  const bounds = [f.from ? Date.parse(f.from) : -Infinity, window.fromMs ?? -Infinity];
  const ends = [f.to ? Date.parse(f.to) : Infinity, window.toMs ?? Infinity];
  const fromUs = fromUnixMs(Math.max(...bounds));
  const toUs = fromUnixMs(Math.min(...ends));
  const first = f.attempts === 'first';
  const { t, station, operator, verdict, attempt, recipeVersion, hall, magnet, stator } = part;
  return (i) => {
    const v = values[i];
    if (v !== v) return false; // no value
    if (verdicts[verdict[i]] !== 1) return false;
    if (t[i] < fromUs || t[i] >= toUs) return false;
    if (first && attempt[i] !== 1) return false;
    if (st && (station[i] < 0 || st[station[i]] !== 1)) return false;
    if (op && (operator[i] < 0 || op[operator[i]] !== 1)) return false;
    if (hb && (hall[i] < 0 || hb[hall[i]] !== 1)) return false;
    if (mr && (magnet[i] < 0 || mr[magnet[i]] !== 1)) return false;
    if (sl && (stator[i] < 0 || sl[stator[i]] !== 1)) return false;
    if (versions && !versions.has(recipeVersion[i])) return false;
    return true;
  };
}

/** Selections kept (distinct filters looked at lately). */
const KEPT_SELECTIONS = 4;

/**
 * The rows the filter selects (those with a value of its figure), optionally within [fromMs, toMs). A filter
 * looked at before takes in only the rows added since (moving the older positions past rows added between
 * them); after a rewrite (a corrected lot) it is selected again from all rows.
 */
export async function selectRows(
  store: CalibrationStore,
  f: AnalysisFilter,
  window: { fromMs?: number; toMs?: number } = {},
): Promise<Selection> {
  const part = await store.current(f.model, f.purpose, f.figure);
  // Exactly what rowTest reads: views whose queries differ only in their own settings share the selection.
  const memoKey = JSON.stringify([
    f.model,
    f.purpose,
    f.figure,
    f.stations,
    f.operators,
    f.hallBoardLots,
    f.magnetRingLots,
    f.statorLots,
    f.recipeVersions,
    f.verdict,
    f.from,
    f.to,
    f.attempts,
    window,
  ]);
  const kept = store.selections.get(memoKey);
  store.selections.delete(memoKey);
  const test = rowTest(store, part, f, window);
  const changes = kept && kept.part === part ? part.changesSince(kept.seen) : null;
  let state: SelectionState;
  if (kept && changes) {
    state = kept;
    if (changes.length > 0) {
      takeIn(state, changes, test);
      state.selection = null;
    }
  } else {
    const at = new Int32Array(Math.max(1024, Math.ceil(part.length * 1.02)));
    let n = 0;
    for (let i = 0; i < part.length; i++) if (test(i)) at[n++] = i;
    state = { part, seen: part.changeCount, at, n, selection: null };
  }
  state.seen = part.changeCount;
  state.selection ??= {
    part,
    values: part.figures.get(f.figure)!,
    at: state.at.subarray(0, state.n),
    n: state.n,
  };
  store.selections.set(memoKey, state);
  if (store.selections.size > KEPT_SELECTIONS) store.selections.delete(store.selections.keys().next().value!);
  return state.selection;
}

/**
 * Takes the rows added by `changes` into a selection. Positions handed out before stay valid: a selection
 * whose rows move is written to a new array; one that only grows at its end is appended to in place.
 */
function takeIn(state: SelectionState, changes: Change[], test: (i: number) => boolean) {
  const { part } = state;
  let at = state.at;
  let n = state.n;
  for (const c of changes) {
    if (n === 0 || c.shifts.length === 0 || c.shifts[0] > at[n - 1]) continue;
    const moved = new Int32Array(at.length);
    for (let k = 0; k < n; k++) moved[k] = movedBy(c, at[k]);
    at = moved;
  }
  const added = part.placesOfAdded(changes).filter(test);
  const m = added.length;
  if (m > 0) {
    if (n + m > at.length || (at === state.at && n > 0 && added[0] < at[n - 1])) {
      // A new array: room to grow, and the older selection's positions untouched.
      const grown = new Int32Array(Math.max(n + m + 1024, Math.ceil((n + m) * 1.02)));
      let i = 0;
      let j = 0;
      let w = 0;
      while (i < n || j < m) grown[w++] = j >= m || (i < n && at[i] < added[j]) ? at[i++] : added[j++];
      at = grown;
    } else if (n > 0 && added[0] < at[n - 1]) {
      // `at` is already a new array: merge from the back in place.
      let i = n - 1;
      let j = m - 1;
      let w = n + m - 1;
      while (j >= 0) at[w--] = i >= 0 && at[i] > added[j] ? at[i--] : added[j--];
    } else at.set(added, n);
    n += m;
  }
  state.at = at;
  state.n = n;
}
