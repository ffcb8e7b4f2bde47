import { readFileSync } from 'node:fs';
import { deflateSync } from 'node:zlib';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

// The traveler embeds Barlow as TrueType: pdfkit cannot read WOFF2, and WOFF costs 40–50 ms per face
// per PDF. The files come from @expo-google-fonts/barlow (SIL Open Font License 1.1).
export const BARLOW_FACES = {
  regular: '400Regular/Barlow_400Regular.ttf',
  semiBold: '600SemiBold/Barlow_600SemiBold.ttf',
  bold: '700Bold/Barlow_700Bold.ttf',
} as const;

export type BarlowFace = keyof typeof BARLOW_FACES;

export function barlowFontDirectory(): string {
  const require = createRequire(import.meta.url);
  try {
    return dirname(require.resolve('@expo-google-fonts/barlow/package.json'));
  } catch (cause) {
    throw new Error('Barlow TTF files not found: the traveler needs the @expo-google-fonts/barlow package.', {
      cause,
    });
  }
}

let buffers: Readonly<Record<BarlowFace, Buffer>> | undefined;

// Read once per process: every render reuses the same bytes.
export function loadBarlowFonts(): Readonly<Record<BarlowFace, Buffer>> {
  if (buffers) return buffers;
  const directory = barlowFontDirectory();
  const entries = Object.entries(BARLOW_FACES).map(([face, file]) => {
    const path = join(directory, file);
    try {
      return [face, readFileSync(path)] as const;
    } catch (cause) {
      throw new Error(`Barlow face "${face}" could not be read from ${path}.`, { cause });
    }
  });
  buffers = Object.freeze(Object.fromEntries(entries) as Record<BarlowFace, Buffer>);
  return buffers;
}

// ---- Parsed faces shared across documents ---------------------------------------------------------------
//
// Given bytes, pdfkit parses the font again for every document and shapes every word from a cold start
// (GSUB/GPOS decoding): about 75 ms of a 100 ms traveler. pdfkit also accepts an already parsed font
// object (anything with a layout() method), so we parse each face once with the font engine pdfkit itself
// depends on, and memoise the shaping of words, which repeat from traveler to traveler (labels, cautions,
// check sentences). pdfkit scales the positions of a run in place, so each call gets its own copy.

interface ShapedGlyph {
  readonly id: number;
  readonly advanceWidth: number;
  readonly codePoints: readonly number[];
}
type Position = Record<string, number>;
interface GlyphRun {
  glyphs: ShapedGlyph[];
  positions: Position[];
  readonly advanceWidth: number;
}
interface ParsedFont {
  layout(text: string, features?: unknown): GlyphRun;
  getGlyph(id: number, codePoints?: number[]): unknown;
}
interface FontEngine {
  create(bytes: Uint8Array): ParsedFont;
}

// Words per face before the memo starts again; a traveler uses a few hundred.
const SHAPING_MEMO_LIMIT = 5000;

class CopiedRun implements GlyphRun {
  constructor(
    readonly glyphs: ShapedGlyph[],
    readonly positions: Position[],
  ) {}
  // Read after pdfkit has scaled the positions, like the engine's own run.
  get advanceWidth(): number {
    let width = 0;
    for (const p of this.positions) width += p.xAdvance;
    return width;
  }
}

// The subsetter decodes every glyph's outline again for each document (a tenth of a traveler's time),
// though a static font's outlines never change. The engine keeps one glyph object per id for the life of
// the parsed font, so we remember each one's decoded outline on it. Nothing changes if the engine's
// internals differ from what this expects: the glyph is left as it is.
const memoised = new WeakSet<object>();
function memoiseOutlineDecoding(glyph: unknown): void {
  if (typeof glyph !== 'object' || glyph === null || memoised.has(glyph)) return;
  memoised.add(glyph);
  const target = glyph as { _decode?: () => unknown };
  const decode = target._decode;
  if (typeof decode !== 'function') return;
  let decoded: { value: unknown } | undefined;
  target._decode = function memoisedDecode(this: unknown) {
    decoded ??= { value: decode.call(this) };
    return decoded.value;
  };
}

// ---- Font files shared across documents -------------------------------------------------------------------
//
// Each PDF embeds the subset of each face it uses, and pdfkit encodes it (a TrueType file built glyph by
// glyph) and deflates it for every document: about a fifth of a traveler's time. The subset numbers glyphs
// in the order they are first drawn, so two travelers whose serials differ by one digit would build
// different subsets. Every document's faces therefore start with the same glyphs in the same order: the
// characters that change from unit to unit (digits, signs, capitals of serials); the fixed text around
// them then adds its glyphs in the same order every time. The glyph list is nearly always the same, and
// its file, encoded and deflated once, is reused as it is; a glyph outside it (an accented name) is
// appended as usual and makes a file of its own, built once and remembered too. Seeding every printable
// character instead would make each PDF about 14 KiB larger.

const SUBSET_SEED_TEXT = '0123456789+-.,:/°−ABCDEFGHIJKLMNOPQRSTUVWXYZ';
// Distinct glyph lists per face to remember; a traveler run uses a handful.
const FONT_FILE_MEMO_LIMIT = 200;
const fontFiles = new WeakMap<object, Map<string, Buffer>>();

// pdfkit keeps, per document, each word it has laid out at its PDF scale. The words repeat from traveler to
// traveler (labels, cautions, check sentences), and pdfkit never changes a run it has cached (it reuses
// them within a document already), so each face shares one such cache across documents. It starts afresh
// now and then so the unit-specific words (serials, times) do not pile up.
const LAYOUT_CACHE_CHECK_EVERY = 200;
const LAYOUT_CACHE_LIMIT = 20_000;
const layoutCaches = new WeakMap<object, { words: Record<string, unknown>; uses: number }>();

function sharedLayoutCache(font: object): Record<string, unknown> {
  let cache = layoutCaches.get(font);
  if (!cache)
    layoutCaches.set(font, (cache = { words: Object.create(null) as Record<string, unknown>, uses: 0 }));
  cache.uses += 1;
  if (cache.uses % LAYOUT_CACHE_CHECK_EVERY === 0 && Object.keys(cache.words).length > LAYOUT_CACHE_LIMIT) {
    cache.words = Object.create(null) as Record<string, unknown>;
  }
  return cache.words;
}

// Each face's ToUnicode map (which characters each glyph of the subset stands for, for copying and search)
// is a text pdfkit writes and deflates at the end of every document; for the same glyph list it is the
// same text, so its deflated bytes are remembered too, keyed by the text itself.
const CMAP_MEMO_LIMIT = 200;
const deflatedCmaps = new Map<string, Buffer>();

// What this code expects of pdfkit's internals; when they differ, nothing is changed (only slower).
interface PdfRef {
  data: Record<string, unknown>;
  buffer: unknown[];
  compress: boolean;
  end?: (chunk?: unknown) => void;
}
interface EmbeddedFace {
  font: object;
  layoutCache?: Record<string, unknown>;
  encode(text: string): unknown;
  subset: { glyphs: number[]; encode(): Uint8Array };
  toUnicodeCmap?: () => unknown;
}

// pdfkit ends the map's object with its text: deflate it as pdfkit would (default level, the text's low
// bytes and a '\n'), once per distinct text.
function endWithRememberedCmap(file: PdfRef): void {
  const end = file.end?.bind(file);
  if (!end) return;
  file.end = (chunk?: unknown) => {
    const fresh = file.buffer.length === 0 && file.compress;
    if (typeof chunk !== 'string' || !fresh) return end(chunk);
    let deflated = deflatedCmaps.get(chunk);
    if (!deflated) {
      deflated = deflateSync(Buffer.from(`${chunk}\n`, 'latin1'));
      if (deflatedCmaps.size >= CMAP_MEMO_LIMIT) deflatedCmaps.clear();
      deflatedCmaps.set(chunk, deflated);
    }
    file.compress = false;
    // Its dictionary keys in pdfkit's order: Length (set on the first write), then Filter.
    file.data.Length ??= 0;
    file.data.Filter = 'FlateDecode';
    return end(deflated);
  };
}

/**
 * Prepares a fresh document's faces (call after registering them, before drawing): seeds each face's
 * glyphs in a fixed order, and hands pdfkit each font file already encoded and deflated when the same
 * glyph list was embedded before.
 */
export function prepareDocumentFonts(doc: PDFKit.PDFDocument): void {
  const d = doc as unknown as { _font?: EmbeddedFace; ref(data?: object): PdfRef };
  // pdfkit creates the font file's object, then asks the subset for its bytes: remember the newest object.
  const ref = d.ref.bind(doc);
  let newest: PdfRef | undefined;
  let writingCmap = false;
  d.ref = (data?: object) => {
    newest = ref(data);
    if (writingCmap) endWithRememberedCmap(newest);
    return newest;
  };
  for (const face of Object.keys(BARLOW_FACES)) {
    doc.font(face);
    const font = d._font;
    if (typeof font?.encode !== 'function' || typeof font.subset?.encode !== 'function') return;
    if (font.layoutCache) font.layoutCache = sharedLayoutCache(font.font);
    const toUnicodeCmap = font.toUnicodeCmap?.bind(font);
    if (toUnicodeCmap)
      font.toUnicodeCmap = () => {
        writingCmap = true;
        try {
          return toUnicodeCmap();
        } finally {
          writingCmap = false;
        }
      };
    for (const ch of SUBSET_SEED_TEXT) font.encode(ch);
    let files = fontFiles.get(font.font);
    if (!files) fontFiles.set(font.font, (files = new Map()));
    const memo = files;
    const encode = font.subset.encode.bind(font.subset);
    font.subset.encode = () => {
      const file = newest;
      const fresh = file && file.buffer.length === 0 && Object.keys(file.data).length === 0;
      if (!fresh || !file.compress) return encode();
      const key = font.subset.glyphs.join(',');
      let deflated = memo.get(key);
      if (!deflated) {
        deflated = deflateSync(encode());
        if (memo.size >= FONT_FILE_MEMO_LIMIT) memo.clear();
        memo.set(key, deflated);
      }
      // Already deflated: pdfkit writes it as it is, under the filter that says how to read it.
      file.compress = false;
      file.data.Filter = 'FlateDecode';
      return deflated;
    };
  }
}

// ---- Words that change from unit to unit ------------------------------------------------------------------
//
// Serials, times, offsets and counts differ on every traveler, so each would be shaped afresh (a tenth of
// a render). Barlow places these characters by pairs only: a digit's advance depends on the character that
// follows it (kerning, "11" closer than "1" then "1"), never on one further away, and no two of them
// become one glyph. So a word is cut between any two of them, each piece is shaped together with the first
// character of the next piece (which gives the piece's last advance its kerning) and that character is
// dropped again: the pieces ("CM5", "57", "7-", "-2", …) repeat from unit to unit. fonts.test.ts checks,
// face by face, that this gives exactly the glyphs and positions of shaping the whole word. A piece whose
// follower does not come back as its own single glyph makes the word be shaped whole.
const CUT_BETWEEN = new Set('0123456789.,:-+−/°');

interface Shaped {
  glyphs: ShapedGlyph[];
  positions: Position[];
}

function memoiseShaping(font: ParsedFont): ParsedFont {
  const memo = new Map<string, Shaped>();
  const remember = (text: string, shaped: Shaped): Shaped => {
    if (memo.size >= SHAPING_MEMO_LIMIT) memo.clear();
    memo.set(text, shaped);
    return shaped;
  };
  const shapedWhole = (text: string): Shaped => {
    const known = memo.get(text);
    if (known) return known;
    const run = font.layout(text);
    return remember(text, { glyphs: run.glyphs, positions: run.positions.map((p) => ({ ...p })) });
  };
  const shapedInPieces = (text: string): Shaped | undefined => {
    const glyphs: ShapedGlyph[] = [];
    const positions: Position[] = [];
    let start = 0;
    for (let i = 1; i < text.length; i += 1) {
      if (!CUT_BETWEEN.has(text[i - 1]) || !CUT_BETWEEN.has(text[i])) continue;
      const next = text[i];
      const withNext = shapedWhole(text.slice(start, i) + next);
      const last = withNext.glyphs[withNext.glyphs.length - 1];
      if (last?.codePoints.length !== 1 || last.codePoints[0] !== next.charCodeAt(0)) return undefined;
      for (let k = 0; k < withNext.glyphs.length - 1; k += 1) {
        glyphs.push(withNext.glyphs[k]);
        positions.push(withNext.positions[k]);
      }
      start = i;
    }
    if (start === 0) return undefined;
    const rest = shapedWhole(text.slice(start));
    glyphs.push(...rest.glyphs);
    positions.push(...rest.positions);
    return { glyphs, positions };
  };
  const shaped = (text: string): Shaped => {
    const known = memo.get(text);
    if (known) return known;
    const pieces = shapedInPieces(text);
    return pieces ? remember(text, pieces) : shapedWhole(text);
  };
  const layout = (text: string, features?: unknown): GlyphRun => {
    if (features !== undefined) return font.layout(text, features);
    const run = shaped(text);
    return new CopiedRun(
      run.glyphs,
      run.positions.map((p) => ({ ...p })),
    );
  };
  const getGlyph = (id: number, codePoints?: number[]): unknown => {
    const glyph = font.getGlyph(id, codePoints);
    memoiseOutlineDecoding(glyph);
    return glyph;
  };
  return new Proxy(font, {
    get: (target, prop) => {
      if (prop === 'layout') return layout;
      if (prop === 'getGlyph') return getGlyph;
      return Reflect.get(target, prop, target);
    },
  });
}

function fontEngine(): FontEngine | undefined {
  try {
    const fromPdfkit = createRequire(createRequire(import.meta.url).resolve('pdfkit'));
    const engine = fromPdfkit('fontkit') as Partial<FontEngine>;
    return typeof engine.create === 'function' ? (engine as FontEngine) : undefined;
  } catch {
    return undefined;
  }
}

export type PdfFontSource = Buffer | ParsedFont;
let parsed: Readonly<Record<BarlowFace, PdfFontSource>> | undefined;

// What to hand to doc.registerFont(): parsed, shared faces when pdfkit's font engine can be reached,
// otherwise the bytes (correct, only slower).
export function barlowFontSources(): Readonly<Record<BarlowFace, PdfFontSource>> {
  if (parsed) return parsed;
  const bytes = loadBarlowFonts();
  const engine = fontEngine();
  const entries = Object.entries(bytes).map(([face, buffer]) => {
    const font = engine?.create(buffer);
    return [face, font && typeof font.layout === 'function' ? memoiseShaping(font) : buffer] as const;
  });
  parsed = Object.freeze(Object.fromEntries(entries) as Record<BarlowFace, PdfFontSource>);
  return parsed;
}
