import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { SERIAL_MAX_LENGTH, normaliseSerial, serialProblem, serialSchema } from './serial';
import { MAX_CAPTURE_US, measurementSchema } from './measurement';
import { exampleMeasurement } from '../simulation/examples';

const VALID = /^[A-Z0-9][A-Z0-9._/-]{2,39}$/;
const serialChar = fc.constantFrom(
  ...'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789._/-'.split(''),
);
const validSerial = fc
  .tuple(fc.constantFrom(...'AZaz09'.split('')), fc.array(serialChar, { minLength: 2, maxLength: 39 }))
  .map(([first, rest]) => first + rest.join(''));

describe('one serial rule', () => {
  it('accepts only what it can carry everywhere, and its output is already normalised (fuzzed)', () => {
    // Any text at all, including control characters, lone surrogates and every Unicode plane.
    const anyText = fc.oneof(
      fc.string({ unit: 'binary', maxLength: 60 }),
      fc.string({
        unit: fc.constantFrom(
          '\u0000',
          '\t',
          '\n',
          '\r',
          ' ',
          '\u00a0',
          'ß',
          'ﬀ',
          'ŉ',
          'a',
          'Z',
          '7',
          '-',
          '\ud800',
        ),
        maxLength: 45,
      }),
      validSerial,
    );
    fc.assert(
      fc.property(anyText, (raw) => {
        const parsed = serialSchema.safeParse(raw);
        expect(parsed.success).toBe(serialProblem(raw) === null);
        if (parsed.success) {
          expect(parsed.data).toMatch(VALID);
          // Normalising twice changes nothing; the normalised form is a serial by the same rule.
          expect(normaliseSerial(parsed.data)).toBe(parsed.data);
          expect(serialSchema.parse(parsed.data)).toBe(parsed.data);
        } else {
          // Every refusal is one sentence for a person, never library wording.
          expect(parsed.error.issues[0].message).toMatch(/^(The serial|“)/);
        }
      }),
      { numRuns: 3000 },
    );
  });

  it('reads every valid serial in any letter case and with a scanner’s CR/LF as one spelling (fuzzed)', () => {
    fc.assert(
      fc.property(validSerial, fc.constantFrom('', ' ', '\r\n', '\t', '\n'), (serial, around) => {
        expect(serialSchema.parse(`${around}${serial.toLowerCase()}${around}`)).toBe(serial.toUpperCase());
      }),
    );
  });

  it('refuses empty, white-space-only, control-character and non-ASCII serials in plain words', () => {
    expect(serialProblem('')).toMatch(/empty/);
    expect(serialProblem(' \t\r\n ')).toMatch(/empty/);
    expect(serialProblem('SN\u0000001')).toMatch(/control character/);
    expect(serialProblem('SN\u0007001')).toMatch(/control character/);
    expect(serialProblem('SN 001')).toMatch(/a space/);
    for (const ch of ['ß', 'ﬀ', 'ŉ']) expect(serialProblem(`SN-${ch}-1`)).toContain(`“${ch}”`);
    expect(serialProblem('SN-\ud800')).not.toBeNull();
    expect(serialProblem('X'.repeat(SERIAL_MAX_LENGTH + 1))).toMatch(/41 characters long; the most is 40/);
    expect(serialProblem('-SN1')).toMatch(/start with a letter or a digit/);
    expect(serialProblem('SN1')).toBeNull();
  });
});

describe('plausible timings', () => {
  // A small measurement: the timing rule does not depend on the list lengths.
  const example = exampleMeasurement();
  const base = {
    ...example,
    segments: [
      {
        ...example.segments[0],
        hallEdges: example.segments[0].hallEdges.slice(0, 6),
        bemfCrossings: example.segments[0].bemfCrossings.slice(0, 6),
      },
    ],
  };
  const withTime = (us: number) => {
    const m = structuredClone(base);
    m.segments[0].hallEdges[0].us = us;
    // Keep the list sorted so only the time rule can refuse it.
    m.segments[0].hallEdges.sort((a, b) => a.us - b.us);
    return m;
  };

  it('accepts a time exactly when it is finite, not negative and within the longest capture (fuzzed)', () => {
    fc.assert(
      fc.property(fc.double(), (us) => {
        const ok = Number.isFinite(us) && us >= 0 && us <= MAX_CAPTURE_US;
        const parsed = measurementSchema.safeParse(withTime(us));
        expect(parsed.success).toBe(ok);
        if (!parsed.success) expect(parsed.error.issues[0].path).toContain('us');
      }),
      { numRuns: 2000 },
    );
  });

  it('names the rule a refused time breaks', () => {
    const message = (us: number) => measurementSchema.safeParse(withTime(us)).error?.issues[0].message;
    expect(message(-1)).toMatch(/must not be negative/);
    expect(message(1e300)).toMatch(/at most 60 s/);
    expect(message(Number.NaN)).toMatch(/number|finite/);
    expect(message(Number.POSITIVE_INFINITY)).toMatch(/number|finite/);
  });
});
