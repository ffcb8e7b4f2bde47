// One line of text written straight into the page content, and its width, from runs shaped once per process.
//
// For each line pdfkit lays the text out again word by word (joining the words' glyph and position arrays),
// numbers each glyph in the document's font subset, and turns the positions into text operators glyph by
// glyph, reading positions whose shapes differ from word to word: about a quarter of a traveler's time,
// though the labels, headings and sentences are the same on every traveler. Here each face remembers, per
// text, what does not depend on the document: the glyph ids, the gaps written between them and the width.
// A line then costs one subset number per glyph and one string. The operators are the same bytes pdfkit
// writes for doc.text(text, x, y, { lineBreak: false }) (q, flip, BT, Tm, Tf, TJ, ET, Q); the flip's save and
// restore leave pdfkit's transform as it was, so it is not touched. A text whose glyphs pdfkit would place
// off the line (mark offsets) is left to pdfkit, as is a document whose internals differ from these.
// pdf-text.test.ts compares the bytes with pdfkit's own for lines and paragraphs.

type Doc = PDFKit.PDFDocument;

// What this code expects of pdfkit (0.20): the embedded font of the document and its subset.
interface ShapedRun {
  glyphs: { id: number; advanceWidth: number; codePoints: number[] }[];
  positions: { xAdvance: number; xOffset: number; yOffset: number; advanceWidth: number }[];
  advanceWidth: number;
}
interface EmbeddedFont {
  id: string;
  font: object;
  scale: number;
  ascender: number;
  widths: number[];
  unicode: number[][];
  subset: { includeGlyph(id: number): number };
  layout(text: string, features?: unknown, onlyWidth?: boolean): ShapedRun;
  ref(): unknown;
}
interface Internals {
  _font?: Partial<EmbeddedFont>;
  _fontSize: number;
  page: { height: number; fonts: Record<string, unknown> };
}

interface Line {
  // undefined: pdfkit places some glyph off the line; it draws this text itself.
  readonly glyphs?: readonly { id: number; advanceWidth: number; codePoints: number[] }[];
  // Per glyph: the gap written after it ('' when none, so the glyph joins the next in one hex string).
  readonly gaps?: readonly string[];
  // At the size of 1000 units, as pdfkit sums it (word by word).
  readonly width: number;
}

// Texts per face before the memo starts again; a traveler writes about two hundred distinct ones.
const LINE_MEMO_LIMIT = 5000;
const memos = new WeakMap<object, Map<string, Line>>();

// pdfkit's number format for content operators (PDFObject.number): rounded to 1e-6.
const number = (n: number): number => Math.round(n * 1e6) / 1e6;
const HEX: string[] = [];
const hex = (gid: number): string => (HEX[gid] ??= `0000${gid.toString(16)}`.slice(-4));

function usable(font: Partial<EmbeddedFont> | undefined): font is EmbeddedFont {
  return (
    typeof font?.layout === 'function' &&
    typeof font.ref === 'function' &&
    typeof font.subset?.includeGlyph === 'function' &&
    Array.isArray(font.widths) &&
    Array.isArray(font.unicode) &&
    typeof font.scale === 'number' &&
    typeof font.ascender === 'number' &&
    typeof font.id === 'string' &&
    typeof font.font === 'object' &&
    font.font !== null
  );
}

function lineOf(font: EmbeddedFont, text: string): Line {
  let memo = memos.get(font.font);
  if (!memo) memos.set(font.font, (memo = new Map()));
  let line = memo.get(text);
  if (line) return line;
  const run = font.layout(text);
  const { glyphs, positions } = run;
  let width = run.advanceWidth;
  let placed = glyphs.length === positions.length;
  const gaps: string[] = [];
  for (let i = 0; placed && i < positions.length; i += 1) {
    const p = positions[i];
    if (p.xOffset || p.yOffset) placed = false;
    const gap = p.xAdvance - p.advanceWidth;
    gaps.push(gap !== 0 || i === positions.length - 1 ? `${number(-gap)}` : '');
  }
  if (typeof width !== 'number') width = font.layout(text, undefined, true).advanceWidth;
  line = placed
    ? {
        glyphs: glyphs.map(({ id, advanceWidth, codePoints }) => ({ id, advanceWidth, codePoints })),
        gaps,
        width,
      }
    : { width };
  if (memo.size >= LINE_MEMO_LIMIT) memo.clear();
  memo.set(text, line);
  return line;
}

/**
 * The width of `text` in the document's current font and size, as doc.widthOfString(text) gives it, or
 * undefined when pdfkit's internals differ from what this expects.
 */
export function lineWidth(doc: Doc, text: string): number | undefined {
  const d = doc as unknown as Internals;
  const font = d._font;
  if (!usable(font)) return undefined;
  // doc.widthOfString's own arithmetic (no character spacing, 100 % horizontal scaling).
  return ((lineOf(font, text).width * (d._fontSize / 1000) + 0) * 100) / 100;
}

/**
 * Writes `text` as one line with its top-left corner at (x, y), in the document's current font, size and
 * fill colour, as doc.text(text, x, y, { lineBreak: false }) would. Returns false, having written nothing,
 * when pdfkit must draw it.
 */
export function writeLine(doc: Doc, text: string, x: number, y: number): boolean {
  const font = (doc as unknown as Internals)._font;
  if (!usable(font) || !writable(font, text)) return false;
  emit(doc, font, lineOf(font, text), x, y);
  return true;
}

// A text pdfkit draws as one line of glyphs on the baseline: what emit() can write.
function writable(font: EmbeddedFont, text: string): boolean {
  return text.length > 0 && !text.includes('\n') && lineOf(font, text).glyphs !== undefined;
}

function emit(doc: Doc, font: EmbeddedFont, line: Line, x: number, y: number): void {
  const { glyphs = [], gaps = [] } = line;
  const d = doc as unknown as Internals;
  const size = d._fontSize;
  const { page } = d;
  let tj = '';
  let run = '';
  for (let i = 0; i < glyphs.length; i += 1) {
    const glyph = glyphs[i];
    const gid = font.subset.includeGlyph(glyph.id);
    // What pdfkit's font.encode() records for each glyph it numbers: its width and its characters.
    if (font.widths[gid] == null) font.widths[gid] = glyph.advanceWidth * font.scale;
    if (font.unicode[gid] == null) font.unicode[gid] = glyph.codePoints;
    run += hex(gid);
    if (gaps[i] !== '') {
      tj += `${tj ? ' ' : ''}<${run}> ${gaps[i]}`;
      run = '';
    }
  }
  if (page.fonts[font.id] == null) page.fonts[font.id] = font.ref();
  const baseline = page.height - y - (font.ascender / 1000) * size;
  doc.addContent(
    `q\n1 0 0 -1 0 ${number(page.height)} cm\nBT\n1 0 0 1 ${number(x)} ${number(baseline)} Tm\n` +
      `/${font.id} ${number(size)} Tf\n[${tj}] TJ\nET\nQ`,
  );
}

// ---- Paragraphs wrapped to a width ---------------------------------------------------------------------
//
// pdfkit wraps a paragraph (doc.text with a width, doc.heightOfString) by finding every break opportunity
// (Unicode line breaking) and measuring every word, each time. The traveler's paragraphs (check sentences,
// limits, cautions) are the same from unit to unit, so each face remembers, per size, width and text, the
// lines pdfkit's own wrapper made of it; the lines are then written as above, one below the other, as
// pdfkit's line callback places them. A paragraph that would reach the bottom margin (where pdfkit would
// open a page) is left to pdfkit.

interface ParagraphInternals {
  _text?: (text: string, x: number, y: number, options: object, onLine: (line: string) => void) => unknown;
  _lineGap?: number;
}

const PARAGRAPH_MEMO_LIMIT = 2000;
const paragraphMemos = new WeakMap<object, Map<string, readonly string[]>>();

function linesOf(doc: Doc, font: EmbeddedFont, text: string, width: number): readonly string[] | undefined {
  const wrapText = (doc as unknown as ParagraphInternals)._text;
  if (typeof wrapText !== 'function') return undefined;
  let memo = paragraphMemos.get(font.font);
  if (!memo) paragraphMemos.set(font.font, (memo = new Map()));
  const key = `${(doc as unknown as Internals)._fontSize}|${width}|${text}`;
  let lines = memo.get(key);
  if (lines) return lines;
  const { x, y } = doc;
  const found: string[] = [];
  // As doc.heightOfString does it: no page is opened, only the lines are collected.
  wrapText.call(doc, text, x, y, { width, height: Infinity }, (line) => found.push(line));
  doc.x = x;
  doc.y = y;
  lines = Object.freeze(found);
  if (memo.size >= PARAGRAPH_MEMO_LIMIT) memo.clear();
  memo.set(key, lines);
  return lines;
}

// The distance pdfkit's line callback moves down after each line.
function lineStep(doc: Doc): number {
  return doc.currentLineHeight(true) + ((doc as unknown as ParagraphInternals)._lineGap || 0);
}

/** doc.heightOfString(text, { width }) in the current font and size, the same number. */
export function paragraphHeight(doc: Doc, text: string, width: number): number {
  const font = (doc as unknown as Internals)._font;
  const lines = usable(font) ? linesOf(doc, font, text, width) : undefined;
  if (!lines) return doc.heightOfString(text, { width });
  // Summed from the cursor, step by step, as pdfkit does (the float result depends on where it starts).
  const step = lineStep(doc);
  let y = doc.y;
  for (let i = 0; i < lines.length; i += 1) y += step;
  return y - doc.y;
}

/**
 * doc.text(text, x, y, { width }): the paragraph wrapped to `width`, its first line's top at y, the cursor
 * left where pdfkit leaves it (x, below the last line).
 */
export function writeParagraph(doc: Doc, text: string, x: number, y: number, width: number): void {
  const font = (doc as unknown as Internals)._font;
  const lines = usable(font) ? linesOf(doc, font, text, width) : undefined;
  const step = lineStep(doc);
  const maxY = doc.page.height - doc.page.margins.bottom;
  // Room for every line and one more, so pdfkit would not have opened a page anywhere in between.
  const fits = lines !== undefined && y + lines.length * step + step < maxY;
  if (!usable(font) || !lines || !fits || !lines.every((line) => writable(font, line))) {
    doc.text(text, x, y, { width });
    return;
  }
  let at = y;
  for (const line of lines) {
    emit(doc, font, lineOf(font, line), x, at);
    at += step;
  }
  doc.x = x;
  doc.y = at;
}
