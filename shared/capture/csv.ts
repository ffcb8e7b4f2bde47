import { CalibrationInputError, type InputIssue } from '../calibration/input';

/**
 * A small, fast reader for numeric CSV captures: optional header row, comma, semicolon or tab separated,
 * every field a decimal number. Numbers with up to 15 significant digits and no exponent take a fast path
 * (exact integer mantissa divided by an exact power of ten: one correctly rounded division, so the result
 * equals parseFloat); anything else goes through parseFloat.
 */

export interface NumericTable {
  /** Column names from the header row, lower-cased and trimmed; empty strings when there was no header. */
  columns: string[];
  hasHeader: boolean;
  rows: number;
  /** One array per column, `rows` long. */
  data: Float64Array[];
}

const POW10 = Array.from({ length: 23 }, (_, i) => 10 ** i);

/**
 * The largest capture the reader works on. A capture has a handful of columns (time, three back-EMF
 * channels, three halls, perhaps a few extra signals); every limit is checked from the input's shape
 * (first line, line count) before any column is allocated, so a hostile file costs at most
 * `maxValues` × 8 bytes of sample memory and time proportional to its length.
 */
export const CSV_LIMITS = {
  /** Columns in a row (header or data). */
  maxColumns: 32,
  /** Bytes in one line, line break excluded. */
  maxLineBytes: 1024,
  /** Data rows. */
  maxRows: 2_000_000,
  /** Samples in all (rows × columns): 10 million × 8 bytes = 80 MB of Float64Array at most. */
  maxValues: 10_000_000,
  /** Problems listed in an error; the rest are counted ("… and N more"). */
  maxIssues: 20,
} as const;

function issue(line: number, message: string): InputIssue {
  return { path: `capture.line ${line}`, message };
}

function tooBig(path: string, message: string): CalibrationInputError {
  return new CalibrationInputError([{ path, message }]);
}

/** Number of separators in a line, without splitting it. */
function countByte(text: Uint8Array, from: number, to: number, code: number): number {
  let n = 0;
  for (let i = from; i < to; i++) if (text[i] === code) n++;
  return n;
}

/**
 * Parses the whole capture (text, or its UTF-8 bytes, which are read directly and faster); throws
 * CalibrationInputError on anything non-numeric (listing up to CSV_LIMITS.maxIssues problems and
 * counting the rest) or on a shape beyond CSV_LIMITS (refused before allocating anything).
 */
export function parseNumericCsv(input: string | Uint8Array): NumericTable {
  const text = typeof input === 'string' ? new TextEncoder().encode(input) : input;
  const decoder = new TextDecoder();
  const len = text.length;
  let pos = 0;
  let line = 1;
  // Skip a UTF-8 byte-order mark and blank leading lines.
  if (text[0] === 0xef && text[1] === 0xbb && text[2] === 0xbf) pos = 3;
  while (pos < len && (text[pos] === 10 || text[pos] === 13)) {
    if (text[pos] === 10) line++;
    pos++;
  }
  let eol = text.indexOf(10, pos);
  if (eol < 0) eol = len;
  const sepCode = [44, 59, 9].reduce(
    (best, code) => (countByte(text, pos, eol, code) > countByte(text, pos, eol, best) ? code : best),
    44,
  );
  const firstColumns = countByte(text, pos, eol, sepCode) + 1;
  if (firstColumns > CSV_LIMITS.maxColumns) {
    throw tooBig(
      `capture.line ${line}`,
      `the line has ${firstColumns} columns; a capture has at most ${CSV_LIMITS.maxColumns}`,
    );
  }
  if (eol - pos > CSV_LIMITS.maxLineBytes + 1) {
    throw tooBig(
      `capture.line ${line}`,
      `the line is ${eol - pos} bytes long; a capture line has at most ${CSV_LIMITS.maxLineBytes} bytes`,
    );
  }
  const firstLine = decoder.decode(text.subarray(pos, eol)).replace(/\r$/, '');
  if (firstLine.trim() === '') throw new CalibrationInputError([issue(line, 'the capture is empty')]);
  const sep = String.fromCharCode(sepCode);
  const firstFields = firstLine.split(sep).map((f) => f.trim());
  const hasHeader = firstFields.some((f) => f !== '' && Number.isNaN(Number(f)));
  const ncol = firstFields.length;
  const columns = hasHeader
    ? firstFields.map((f) => f.toLowerCase().replace(/^"|"$/g, ''))
    : firstFields.map(() => '');
  if (hasHeader) {
    pos = eol + 1;
    line++;
  }
  // At most one row per line: count the lines once and allocate exactly, never more than the limits.
  // A row ends at LF, CR LF or a lone CR (the loop below treats CR as an end of row too).
  let lines = pos < len ? 1 : 0;
  for (let i = pos; i < len - 1; i++) {
    const b = text[i];
    if (b === 10 || (b === 13 && text[i + 1] !== 10)) lines++;
  }
  if (lines > CSV_LIMITS.maxRows) {
    throw tooBig('capture', `the capture has ${lines} lines; at most ${CSV_LIMITS.maxRows} rows are read`);
  }
  if (lines * ncol > CSV_LIMITS.maxValues) {
    throw tooBig(
      'capture',
      `the capture has ${lines} rows of ${ncol} columns; at most ${CSV_LIMITS.maxValues} values are read`,
    );
  }
  const cap = lines;
  const data = Array.from({ length: ncol }, () => new Float64Array(cap));
  let rows = 0;
  const issues: InputIssue[] = [];
  let unlisted = 0;
  const report = (found: InputIssue) => {
    if (issues.length < CSV_LIMITS.maxIssues) issues.push(found);
    else unlisted++;
  };

  while (pos < len) {
    let c = text[pos];
    if (c === 10 || c === 13) {
      if (c === 10) line++;
      pos++;
      continue;
    }
    const rowStart = pos;
    let col = 0;
    let rowOk = true;
    for (;;) {
      // One field: fast decimal parse, fall back to parseFloat.
      const start = pos;
      while (pos < len && (c = text[pos]) === 32) pos++;
      let neg = false;
      if (c === 45 || c === 43) {
        neg = c === 45;
        pos++;
      }
      let mant = 0;
      let digits = 0;
      let frac = 0;
      let seen = false;
      while (pos < len && (c = text[pos]) >= 48 && c <= 57) {
        mant = mant * 10 + (c - 48);
        if (mant !== 0) digits++;
        seen = true;
        pos++;
      }
      if (c === 46) {
        pos++;
        while (pos < len && (c = text[pos]) >= 48 && c <= 57) {
          mant = mant * 10 + (c - 48);
          if (mant !== 0) digits++;
          frac++;
          seen = true;
          pos++;
        }
      }
      let value: number;
      if (
        seen &&
        digits <= 15 &&
        frac <= 22 &&
        (pos >= len || c === sepCode || c === 10 || c === 13 || c === 32)
      ) {
        value = frac === 0 ? mant : mant / POW10[frac];
        if (neg) value = -value;
        while (pos < len && text[pos] === 32) pos++;
      } else {
        let end = pos;
        while (end < len && (c = text[end]) !== sepCode && c !== 10 && c !== 13) end++;
        const raw = decoder.decode(text.subarray(start, end)).trim();
        value = raw === '' ? NaN : Number(raw);
        pos = end;
        if (!Number.isFinite(value) && rowOk) {
          report(issue(line, `column ${col + 1} ("${raw.slice(0, 20)}") is not a finite number`));
          rowOk = false;
        }
      }
      if (col < ncol) data[col][rows] = value;
      col++;
      if (pos >= len) break;
      c = text[pos];
      if (c === sepCode) {
        pos++;
        if (col < ncol) continue;
        // More fields than the first line: one problem for the row, and the rest of it is skipped.
        while (pos < len && text[pos] !== 10) pos++;
        report(issue(line, `has more than ${ncol} fields, the first line has ${ncol}`));
        rowOk = false;
        break;
      }
      if (c === 13 || c === 10) break;
      if (rowOk) {
        const shown = c < 32 || c === 127 ? `byte ${c}` : `"${String.fromCharCode(c)}"`;
        report(issue(line, `unexpected character ${shown} in column ${col}`));
      }
      rowOk = false;
      while (pos < len && text[pos] !== 10) pos++;
      break;
    }
    if (pos - rowStart > CSV_LIMITS.maxLineBytes + 1 && rowOk) {
      report(issue(line, `the line is longer than ${CSV_LIMITS.maxLineBytes} bytes`));
    } else if (col !== ncol && rowOk) report(issue(line, `has ${col} fields, the first line has ${ncol}`));
    rows++;
  }
  if (issues.length > 0) throw new CalibrationInputError(issues, unlisted);
  if (rows === 0) throw new CalibrationInputError([issue(line, 'the capture has no data rows')]);
  return { columns, hasHeader, rows, data: data.map((d) => d.subarray(0, rows)) };
}
