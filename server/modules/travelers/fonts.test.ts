import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { BARLOW_FACES, barlowFontSources, loadBarlowFonts, type BarlowFace } from './fonts';

interface Run {
  glyphs: { id: number }[];
  positions: { xAdvance: number; yAdvance: number; xOffset: number; yOffset: number }[];
}
interface Shaper {
  layout(text: string): Run;
}

// The font engine pdfkit itself uses, shaping from scratch: the reference every shortcut must equal.
function freshFace(face: BarlowFace): Shaper {
  const fromPdfkit = createRequire(createRequire(import.meta.url).resolve('pdfkit'));
  const engine = fromPdfkit('fontkit') as { create(bytes: Uint8Array): Shaper };
  return engine.create(loadBarlowFonts()[face]);
}

const flat = (run: Run) => ({
  glyphs: run.glyphs.map((g) => g.id),
  positions: run.positions.map((p) => [p.xAdvance, p.yAdvance, p.xOffset, p.yOffset]),
});

// Deterministic pseudo-random picks (a linear congruential generator), so a failure can be replayed.
function picker(seed: number) {
  let state = seed;
  return (from: string): string => {
    state = (state * 1_103_515_245 + 12_345) % 2_147_483_648;
    return from[state % from.length];
  };
}

const CHANGING = '0123456789.,:-+−/°';
const DIGITS = '0123456789';
const CAPS = 'ABCDEFGHIJKLMNOPQRSTUVWXYZ';

describe('Barlow shaping shared across travelers', () => {
  it('shapes the words that change from unit to unit (serials, times, offsets) exactly as the font engine does', () => {
    const pick = picker(57);
    const words: string[] = [];
    // Every pair of the characters the words are cut between, alone and with the space pdfkit keeps.
    for (const a of CHANGING) for (const b of CHANGING) words.push(a + b, `${a + b} `);
    for (let i = 0; i < 150; i += 1) {
      const n = (k: number) => Array.from({ length: k }, () => pick(DIGITS)).join('');
      words.push(
        `${pick(CAPS)}${pick(CAPS)}${n(2)}-${n(2)}-${n(6)}`,
        `${n(4)}-${n(2)}-${n(2)}`,
        `${n(2)}:${n(2)}:${n(2)} `,
        `${pick('+−')}${n(1)}.${n(2)}°`,
        `UTC${pick('+-')}${n(2)}:${n(2)}`,
        Array.from({ length: 8 }, () => pick(`${CHANGING}${CAPS}xvfi`)).join(''),
      );
    }
    const shared = barlowFontSources();
    for (const face of Object.keys(BARLOW_FACES) as BarlowFace[]) {
      const reference = freshFace(face);
      const memoised = shared[face] as unknown as Shaper;
      expect(typeof memoised.layout, 'the faces are shared parsed fonts').toBe('function');
      for (const word of words)
        expect(flat(memoised.layout(word)), `${face} ${word}`).toEqual(flat(reference.layout(word)));
    }
  });
});
