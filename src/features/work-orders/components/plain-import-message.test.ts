import { describe, expect, it } from 'vitest';
import { plainImportMessage } from './work-order-import';

describe('work-order import messages', () => {
  // The messages are those of papaparse, the CSV reader the server uses (https://www.papaparse.com/docs#errors).
  it("turns the CSV reader's layout messages into plain words", () => {
    expect(plainImportMessage('Too few fields: expected 6 fields but parsed 4')).toBe(
      'This row has fewer columns than the header.',
    );
    expect(plainImportMessage('Too many fields: expected 6 fields but parsed 7')).toBe(
      'This row has more columns than the header.',
    );
    expect(plainImportMessage('Quoted field unterminated')).toBe(
      'A quotation mark is opened and never closed in this row.',
    );
  });

  it("keeps the server's own sentences", () => {
    expect(plainImportMessage('model "XX-1" is not a known model code')).toBe(
      'model "XX-1" is not a known model code',
    );
  });
});
