import bwipjs from 'bwip-js';
import { encodeDataMatrix } from './datamatrix';

// ---- Barcodes drawn as vector paths ---------------------------------------------------------------------
//
// bwip-js encodes Code 128 (bar widths), datamatrix.ts the Data Matrix (module matrix); we draw the
// dark modules straight into the PDF as filled rectangles, one path per symbol. No raster is made,
// encoded, compressed or decoded, and a printer of any resolution (203 dpi thermal included) places
// every edge itself instead of resampling a bitmap. Each symbol is filled as one path, so abutting
// modules show no seams when rasterised with anti-aliasing. White quiet zones are painted under the
// symbol so no layout (or watermark) can crowd them: ISO/IEC 15417 asks ≥ 10 modules each side of a
// Code 128 symbol, ISO/IEC 16022 ≥ 1 module around a Data Matrix (we give 2).

type Doc = PDFKit.PDFDocument;

export const CODE128_QUIET_MODULES = 10;
export const DATAMATRIX_QUIET_MODULES = 2;

export interface Code128Symbol {
  /** Dark bars as [first module, width in modules], quiet zone excluded. */
  bars: [number, number][];
  /** Modules of the symbol alone. */
  modules: number;
  /** Modules including both quiet zones. */
  modulesWide: number;
}

export function code128Symbol(text: string): Code128Symbol {
  const [symbol] = bwipjs.raw({ bcid: 'code128', text });
  if (!symbol || !('sbs' in symbol)) throw new Error('bwip-js returned no Code 128 symbol');
  const bars: [number, number][] = [];
  let at = 0;
  symbol.sbs.forEach((width, i) => {
    // sbs alternates bar, space, bar, … starting with a bar.
    if (i % 2 === 0) bars.push([at, width]);
    at += width;
  });
  return { bars, modules: at, modulesWide: at + 2 * CODE128_QUIET_MODULES };
}

export interface DataMatrixSymbol {
  /** Dark runs as [column, row, length in modules]: horizontal runs of adjacent dark modules. */
  runs: [number, number, number][];
  columns: number;
  rows: number;
  /** Modules including the quiet zone on both sides. */
  modulesWide: number;
  modulesHigh: number;
}

// The module matrix from our own encoder (datamatrix.ts: ASCII encodation, a few hundredths of bwip-js's
// time), or from bwip-js for text that encoder leaves aside.
function dataMatrixModules(text: string): { pixs: ArrayLike<number>; pixx: number; pixy: number } {
  const ours = encodeDataMatrix(text);
  if (ours) return { pixs: ours.pixs, pixx: ours.size, pixy: ours.size };
  const [symbol] = bwipjs.raw({ bcid: 'datamatrix', text });
  if (!symbol || !('pixs' in symbol)) throw new Error('bwip-js returned no Data Matrix symbol');
  return symbol;
}

export function dataMatrixSymbol(text: string): DataMatrixSymbol {
  const { pixs, pixx, pixy } = dataMatrixModules(text);
  const runs: [number, number, number][] = [];
  for (let y = 0; y < pixy; y += 1) {
    let x = 0;
    while (x < pixx) {
      if (pixs[y * pixx + x] !== 1) {
        x += 1;
        continue;
      }
      const start = x;
      while (x < pixx && pixs[y * pixx + x] === 1) x += 1;
      runs.push([start, y, x - start]);
    }
  }
  const q = DATAMATRIX_QUIET_MODULES;
  return { runs, columns: pixx, rows: pixy, modulesWide: pixx + 2 * q, modulesHigh: pixy + 2 * q };
}

// Numbers in the content stream: 3 decimals is 1/1000 pt, far below any printer's dot.
const n = (v: number): string => String(Math.round(v * 1000) / 1000);

/**
 * Draws a Code 128 symbol with its quiet zones. `x` is the left edge of the left quiet zone; the whole
 * drawing is symbol.modulesWide × moduleWidth wide and `height` tall.
 */
export function drawCode128(
  doc: Doc,
  symbol: Code128Symbol,
  at: { x: number; y: number; moduleWidth: number; height: number },
): void {
  const { x, y, moduleWidth: m, height } = at;
  const x0 = x + CODE128_QUIET_MODULES * m;
  const ops = [`${n(x)} ${n(y)} ${n(symbol.modulesWide * m)} ${n(height)} re`, '1 g f'];
  for (const [start, width] of symbol.bars)
    ops.push(`${n(x0 + start * m)} ${n(y)} ${n(width * m)} ${n(height)} re`);
  ops.push('0 g f');
  doc.save().addContent(ops.join('\n')).restore();
}

/** Draws a Data Matrix with its quiet zone into the square at (x, y) of side `size`. */
export function drawDataMatrix(
  doc: Doc,
  symbol: DataMatrixSymbol,
  at: { x: number; y: number; size: number },
): void {
  const { x, y, size } = at;
  const m = size / Math.max(symbol.modulesWide, symbol.modulesHigh);
  const x0 = x + DATAMATRIX_QUIET_MODULES * m;
  const y0 = y + DATAMATRIX_QUIET_MODULES * m;
  const ops = [`${n(x)} ${n(y)} ${n(symbol.modulesWide * m)} ${n(symbol.modulesHigh * m)} re`, '1 g f'];
  for (const [col, row, len] of symbol.runs)
    ops.push(`${n(x0 + col * m)} ${n(y0 + row * m)} ${n(len * m)} ${n(m)} re`);
  ops.push('0 g f');
  doc.save().addContent(ops.join('\n')).restore();
}
