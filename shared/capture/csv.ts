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

function issue(line: number, message: string): InputIssue {
  return { path: `capture.line ${line}`, message };
}

/**
 * Parses the whole capture (text, or its UTF-8 bytes, which are read directly and faster); throws
 * CalibrationInputError (listing up to 20 problems) on anything non-numeric.
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
  const firstLine = decoder.decode(text.subarray(pos, eol)).replace(/\r$/, '');
  if (firstLine.trim() === '') throw new CalibrationInputError([issue(line, 'the capture is empty')]);
  const sep = [',', ';', '\t'].reduce(
    (best, s) => (firstLine.split(s).length > firstLine.split(best).length ? s : best),
    ',',
  );
  const sepCode = sep.charCodeAt(0);
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
  let cap = Math.max(1024, Math.ceil((len - pos) / (ncol * 6)));
  let data = Array.from({ length: ncol }, () => new Float64Array(cap));
  let rows = 0;
  const issues: InputIssue[] = [];

  while (pos < len && issues.length < 20) {
    let c = text[pos];
    if (c === 10 || c === 13) {
      if (c === 10) line++;
      pos++;
      continue;
    }
    if (rows === cap) {
      cap *= 2;
      data = data.map((col) => {
        const grown = new Float64Array(cap);
        grown.set(col);
        return grown;
      });
    }
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
        if (!Number.isFinite(value)) {
          issues.push(issue(line, `column ${col + 1} ("${raw.slice(0, 20)}") is not a finite number`));
          rowOk = false;
        }
      }
      if (col < ncol) data[col][rows] = value;
      col++;
      if (pos >= len) break;
      c = text[pos];
      if (c === sepCode) {
        pos++;
        continue;
      }
      if (c === 13 || c === 10) break;
      issues.push(issue(line, `unexpected character "${String.fromCharCode(text[pos])}" in column ${col}`));
      rowOk = false;
      while (pos < len && text[pos] !== 10) pos++;
      break;
    }
    if (col !== ncol && rowOk) issues.push(issue(line, `has ${col} fields, the header has ${ncol}`));
    rows++;
  }
  if (issues.length > 0) throw new CalibrationInputError(issues);
  if (rows === 0) throw new CalibrationInputError([issue(line, 'the capture has no data rows')]);
  return { columns, hasHeader, rows, data: data.map((d) => d.subarray(0, rows)) };
}
