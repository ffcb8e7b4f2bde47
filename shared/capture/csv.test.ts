import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { CalibrationInputError } from '../calibration/input';
import { createRng } from '../simulation/rng';
import { CSV_LIMITS, parseNumericCsv } from './csv';

describe('numeric CSV reader (cross-checked against papaparse, a general-purpose CSV parser from npm)', () => {
  it('reads the same numbers as papaparse with dynamic typing, bit for bit', () => {
    const rng = createRng(11);
    const rows = ['time_s,va,vb,vc,ha,hb,hc'];
    for (let i = 0; i < 2000; i++) {
      const f = () =>
        (rng.normal() * 10 ** Math.floor(rng.next() * 6 - 3)).toFixed(Math.floor(rng.next() * 9));
      const special = i % 97 === 0 ? '1.5e-3' : i % 89 === 0 ? '-0.000012345678901234567' : f();
      rows.push([(i * 1e-6).toFixed(9), f(), special, f(), '1', '0', ' 5 '].join(','));
    }
    const text = rows.join('\r\n');
    const ours = parseNumericCsv(text);
    const theirs = Papa.parse<Record<string, number>>(text, {
      header: true,
      dynamicTyping: true,
      skipEmptyLines: true,
      transformHeader: (h) => h.trim(),
      transform: (v) => v.trim(),
    });
    expect(ours.columns).toEqual(['time_s', 'va', 'vb', 'vc', 'ha', 'hb', 'hc']);
    expect(ours.rows).toBe(theirs.data.length);
    const mismatches: string[] = [];
    ours.columns.forEach((name, c) => {
      for (let r = 0; r < ours.rows; r++) {
        if (!Object.is(ours.data[c][r], Number(theirs.data[r][name]))) mismatches.push(`${name}[${r}]`);
      }
    });
    expect(mismatches).toEqual([]);
    // The UTF-8 bytes of the same file read identically.
    const fromBytes = parseNumericCsv(new TextEncoder().encode(`\ufeff${text}`));
    expect(fromBytes.columns).toEqual(ours.columns);
    fromBytes.data.forEach((col, c) => expect(col).toEqual(ours.data[c]));
  });

  it('reads files without a header, with semicolons or a trailing newline', () => {
    const t = parseNumericCsv('0;1.5;-2\n1e-6;2;3\n');
    expect(t.hasHeader).toBe(false);
    expect(t.rows).toBe(2);
    expect([...t.data[0]]).toEqual([0, 1e-6]);
    expect([...t.data[2]]).toEqual([-2, 3]);
  });

  it('names the line of every field that is not a number', () => {
    try {
      parseNumericCsv('time_s,va\n0,1\n0.1,abc\n0.2,\n0.3,4,5\n');
      throw new Error('accepted bad CSV');
    } catch (e) {
      expect(e).toBeInstanceOf(CalibrationInputError);
      const issues = (e as CalibrationInputError).issues;
      expect(issues.map((i) => i.path)).toEqual(['capture.line 3', 'capture.line 4', 'capture.line 5']);
      expect(issues[0].message).toMatch(/abc/);
    }
  });

  it('rejects an empty capture', () => {
    expect(() => parseNumericCsv('\n\n')).toThrow(CalibrationInputError);
    expect(() => parseNumericCsv('time_s,va\n')).toThrow(/no data rows/);
  });

  it('refuses a shape beyond the documented limits before reading it', () => {
    expect(() => parseNumericCsv(','.repeat(99_999))).toThrow(/100000 columns; a capture has at most 32/);
    expect(() => parseNumericCsv('1'.repeat(5000))).toThrow(/5000 bytes long/);
    expect(() => parseNumericCsv('0\n'.repeat(CSV_LIMITS.maxRows + 1))).toThrow(/at most 2000000 rows/);
    const wide = Array.from({ length: 30 }, () => '0').join(',') + '\n';
    expect(() => parseNumericCsv(wide.repeat(400_000))).toThrow(/at most 10000000 values/);
  });

  it('reads rows ended by a lone carriage return as separate rows', () => {
    const t = parseNumericCsv('time_s,va\n0,1\r1,2\r2,3');
    expect(t.rows).toBe(3);
    expect([...t.data[1]]).toEqual([1, 2, 3]);
  });

  it('lists at most the first problems and counts the rest', () => {
    try {
      parseNumericCsv('a,b\n' + 'x,1\n'.repeat(100) + '1,2,3,4,5\n');
      throw new Error('accepted bad CSV');
    } catch (e) {
      const issues = (e as CalibrationInputError).issues;
      expect(issues).toHaveLength(CSV_LIMITS.maxIssues + 1);
      expect(issues.at(-1)!.message).toBe('and 81 more problems of the same kinds, not listed');
      expect((e as Error).message).toMatch(/101 problems/);
    }
  });
});
