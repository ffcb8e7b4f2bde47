import { z } from 'zod';

/**
 * The one serial rule of the product: the station API, the capture upload, the work-order import, the
 * scan field, the unit pages and the traveler all read a serial through `serialSchema`.
 *
 * - Normalisation, done once here: surrounding white space (a scanner's trailing CR/LF or TAB, stray
 *   spaces) is removed, then letters are upper-cased. The result is the serial's one spelling: it is
 *   what is stored, compared, printed and encoded in barcodes.
 * - Allowed: 3 to 40 characters, ASCII letters and digits, and `.` `_` `/` `-` inside; the first is a
 *   letter or digit. Non-ASCII is refused rather than folded (no Unicode NFKC): `ß`, `ﬀ` or `ŉ`
 *   upper-case differently in JavaScript and in a database locale, and a serial must be the same
 *   characters on the label, in the barcode (Code 128 carries ASCII) and in the record.
 * - Because only ASCII letters are upper-cased, JavaScript's `toUpperCase()` and PostgreSQL's `upper()`
 *   agree on every valid serial, so `upper(serial) = <normalised>` finds the unit in SQL too.
 */
export const SERIAL_MIN_LENGTH = 3;
export const SERIAL_MAX_LENGTH = 40;
const SERIAL_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._/-]*$/;
/** ASCII white space only: what scanners and keyboards add around a serial. */
const EDGE_SPACE = /^[ \t\r\n]+|[ \t\r\n]+$/g;

export const SERIAL_RULE_TEXT =
  'A serial has 3 to 40 characters: letters A to Z, digits, and . _ / - inside (no spaces or accented letters).';

/** The reason a text is not a serial, in plain words, or null when it is one. */
export function serialProblem(raw: string): string | null {
  const text = raw.replace(EDGE_SPACE, '');
  if (text.length === 0) return 'The serial is empty. Scan the label, or type the serial.';
  const bad = [...text].find((ch) => !/[A-Za-z0-9._/-]/.test(ch));
  if (bad !== undefined) {
    const code = bad.codePointAt(0)!;
    const shown =
      code < 32 || code === 127 || (code >= 0x80 && code <= 0x9f)
        ? 'a control character'
        : /\s/.test(bad)
          ? 'a space'
          : `“${bad}”`;
    return `The serial contains ${shown}. ${SERIAL_RULE_TEXT}`;
  }
  if (text.length < SERIAL_MIN_LENGTH) return `“${text}” is too short for a serial. ${SERIAL_RULE_TEXT}`;
  if (text.length > SERIAL_MAX_LENGTH)
    return `The serial is ${text.length} characters long; the most is ${SERIAL_MAX_LENGTH}. ${SERIAL_RULE_TEXT}`;
  if (!SERIAL_PATTERN.test(text))
    return `The serial must start with a letter or a digit. ${SERIAL_RULE_TEXT}`;
  return null;
}

/** The normalised spelling of a valid serial (call only after `serialProblem` returned null). */
export function normaliseSerial(raw: string): string {
  return raw.replace(EDGE_SPACE, '').toUpperCase();
}

/** A serial as received (scanned, typed, posted, imported): checked, then normalised. */
export const serialSchema = z
  .string({ error: 'A serial is required.' })
  .superRefine((raw, ctx) => {
    const problem = serialProblem(raw);
    if (problem) ctx.addIssue({ code: 'custom', message: problem, input: raw });
  })
  .transform(normaliseSerial);

/** Whether two serials (scanned, shown, announced by a station) name the same unit. */
export function sameSerial(a: string | null | undefined, b: string | null | undefined): boolean {
  return !!a && !!b && normaliseSerial(a) === normaliseSerial(b);
}
