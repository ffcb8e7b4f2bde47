import { describe, expect, it } from 'vitest';
import bwipjs from 'bwip-js';
import { asciiCodewords, encodeDataMatrix } from './datamatrix';

// The outside reference: bwip-js (Barcode Writer in Pure PostScript), given the same ASCII codewords in
// its raw mode, must place exactly the same modules, padding and error correction included.
function reference(text: string): { size: number; pixs: string } {
  const codewords = asciiCodewords(text)!;
  const raw = codewords.map((c) => `^${String(c).padStart(3, '0')}`).join('');
  const [symbol] = bwipjs.raw({ bcid: 'datamatrix', text: raw, raw: true } as never) as unknown as {
    pixx: number;
    pixy: number;
    pixs: number[];
  }[];
  expect(symbol.pixx).toBe(symbol.pixy);
  return { size: symbol.pixx, pixs: symbol.pixs.join('') };
}

describe('Data Matrix encoder', () => {
  it('places the same modules as bwip-js for every square size a traveler code can need', () => {
    const sizes = new Set<number>();
    // 1 to 340 characters: every square symbol from 10 × 10 to 64 × 64 (interleaved blocks from 52 × 52), odd and even digit runs.
    for (let length = 1; length <= 340; length += length < 40 ? 1 : 7) {
      const text = `PW1|SN=CM57-24-${'0123456789ABCDEFabc|@ =+-./'.repeat(20)}`.slice(0, length);
      const ours = encodeDataMatrix(text)!;
      const theirs = reference(text);
      expect({ length, size: ours.size }).toEqual({ length, size: theirs.size });
      expect(Array.from(ours.pixs).join('')).toBe(theirs.pixs);
      sizes.add(ours.size);
    }
    expect([...sizes].sort((a, b) => a - b)).toEqual([
      10, 12, 14, 16, 18, 20, 22, 24, 26, 32, 36, 40, 44, 48, 52, 64,
    ]);
  });

  it('leaves text outside ASCII or beyond a 104 × 104 symbol to the caller', () => {
    expect(encodeDataMatrix('Zoë')).toBeNull();
    expect(encodeDataMatrix('A'.repeat(1200))).toBeNull();
  });
});
