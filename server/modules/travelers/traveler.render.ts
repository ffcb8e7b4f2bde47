import { crc32, deflateSync } from 'node:zlib';
import bwipjs from 'bwip-js';
import PDFDocument from 'pdfkit';
import { barlowFontSources } from './fonts';
import type { BarlowFace } from './fonts';
import type {
  ProgrammingConfirmation,
  TravelerCheck,
  TravelerData,
  TravelerDataInput,
} from './traveler.types';
import { parseTravelerData, SENSORS } from './traveler.types';
import {
  checkName,
  formatCheckLimit as limitText,
  formatCheckValue as valueText,
  plainNumber,
} from '../../../shared/calibration/check-guide';
import { formatOffsetDeg, SAFETY_CAUTIONS, SAFETY_TITLE } from '../../../shared/wording';

export { SAFETY_CAUTIONS };

// The unit traveler: one page that follows a calibrated unit down the line and into the plant's files.
// Pure: data in, PDF bytes out. The same data (generatedAt included) gives the same bytes, so the stored
// sha256 of a traveler can be reproduced.

export const PAGE_SIZES_PT = {
  A4: [595.28, 841.89],
  LETTER: [612, 792],
} as const;

// ---- Data Matrix text ---------------------------------------------------------------------------------
//
// Format PW1, our own, kept short so the symbol stays small (a 22–32 module square):
//   PW1|SN=<serial>|OFS=<offsetDeg, signed, 2 decimals>|CNT=<offsetCounts>/<countsPerTurn>|RCP=<recipe>@<version>|V=<P|F>
// Fields are separated by '|'; each is KEY=value. Serials and recipe names never contain '|' or '='
// (the input schema forbids them), so no escaping is needed. Readers must ignore keys they do not know.

export const TRAVELER_CODE_FORMAT = 'PW1';

export interface TravelerCode {
  serial: string;
  offsetDeg: number;
  offsetCounts: number;
  countsPerTurn: number;
  recipeName: string;
  recipeVersion: number;
  verdict: 'pass' | 'fail';
}

export function formatTravelerCode(data: TravelerData): string {
  return [
    TRAVELER_CODE_FORMAT,
    `SN=${data.serial}`,
    `OFS=${signed(data.offsetDeg, 2)}`,
    `CNT=${data.offsetCounts}/${data.countsPerTurn}`,
    `RCP=${data.recipe.name}@${data.recipe.version}`,
    `V=${data.verdict === 'pass' ? 'P' : 'F'}`,
  ].join('|');
}

export function parseTravelerCode(text: string): TravelerCode {
  const [format, ...fields] = text.split('|');
  if (format !== TRAVELER_CODE_FORMAT)
    throw new Error(`not a ${TRAVELER_CODE_FORMAT} traveler code: "${text}"`);
  const values = new Map(
    fields.map((f) => {
      const at = f.indexOf('=');
      return [f.slice(0, at), f.slice(at + 1)] as const;
    }),
  );
  const need = (key: string): string => {
    const value = values.get(key);
    if (value === undefined || value === '') throw new Error(`traveler code lacks ${key}: "${text}"`);
    return value;
  };
  const counts = /^(-?\d+)\/(\d+)$/.exec(need('CNT'));
  const recipe = /^(.+)@(\d+)$/.exec(need('RCP'));
  const offsetDeg = Number(need('OFS'));
  const verdict = need('V');
  if (!counts || !recipe || !Number.isFinite(offsetDeg) || (verdict !== 'P' && verdict !== 'F')) {
    throw new Error(`malformed traveler code: "${text}"`);
  }
  return {
    serial: need('SN'),
    offsetDeg,
    offsetCounts: Number(counts[1]),
    countsPerTurn: Number(counts[2]),
    recipeName: recipe[1],
    recipeVersion: Number(recipe[2]),
    verdict: verdict === 'P' ? 'pass' : 'fail',
  };
}

// ---- Barcode images -----------------------------------------------------------------------------------
//
// bwip-js encodes the symbols; we paint its module matrix into an 8-bit greyscale PNG ourselves. Its own
// PNGs carry an alpha channel, which pdfkit splits into a soft mask pixel by pixel (≈9 ms a traveler);
// an opaque greyscale PNG goes into the PDF as it is. White quiet zones are part of the image so no
// layout can crowd them: ISO/IEC 15417 asks ≥ 10 modules each side of a Code 128 symbol, ISO/IEC 16022
// ≥ 1 module around a Data Matrix (we give 2).

interface GreyImage {
  png: Buffer;
  widthPx: number;
  heightPx: number;
  modulesWide: number;
  modulesHigh: number;
}

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

function pngChunk(type: string, body: Buffer): Buffer {
  const out = Buffer.alloc(12 + body.length);
  out.writeUInt32BE(body.length, 0);
  out.write(type, 4, 'latin1');
  body.copy(out, 8);
  out.writeUInt32BE(crc32(out.subarray(4, 8 + body.length)), 8 + body.length);
  return out;
}

// rows: one byte per pixel (0 black, 255 white), each row prefixed by its PNG filter byte (0 = none).
function greyPng(widthPx: number, heightPx: number, rows: Buffer): Buffer {
  const header = Buffer.alloc(13);
  header.writeUInt32BE(widthPx, 0);
  header.writeUInt32BE(heightPx, 4);
  header[8] = 8; // bit depth
  header[9] = 0; // colour type 0: greyscale, no alpha
  return Buffer.concat([
    PNG_SIGNATURE,
    pngChunk('IHDR', header),
    pngChunk('IDAT', deflateSync(rows, { level: 6 })),
    pngChunk('IEND', Buffer.alloc(0)),
  ]);
}

const CODE128_QUIET_MODULES = 10;
const CODE128_PX_PER_MODULE = 3;
const CODE128_HEIGHT_PX = 40;

export function code128Image(text: string): GreyImage {
  const [symbol] = bwipjs.raw({ bcid: 'code128', text });
  if (!symbol || !('sbs' in symbol)) throw new Error('bwip-js returned no Code 128 symbol');
  const modules: boolean[] = [];
  symbol.sbs.forEach((width, i) => {
    for (let k = 0; k < width; k += 1) modules.push(i % 2 === 0);
  });
  const modulesWide = modules.length + 2 * CODE128_QUIET_MODULES;
  const widthPx = modulesWide * CODE128_PX_PER_MODULE;
  const row = Buffer.alloc(widthPx + 1, 255);
  row[0] = 0;
  modules.forEach((dark, m) => {
    if (!dark) return;
    const start = 1 + (m + CODE128_QUIET_MODULES) * CODE128_PX_PER_MODULE;
    row.fill(0, start, start + CODE128_PX_PER_MODULE);
  });
  const rows = Buffer.alloc(row.length * CODE128_HEIGHT_PX);
  for (let y = 0; y < CODE128_HEIGHT_PX; y += 1) row.copy(rows, y * row.length);
  return {
    png: greyPng(widthPx, CODE128_HEIGHT_PX, rows),
    widthPx,
    heightPx: CODE128_HEIGHT_PX,
    modulesWide,
    modulesHigh: 0,
  };
}

const DATAMATRIX_QUIET_MODULES = 2;
const DATAMATRIX_PX_PER_MODULE = 4;

export function dataMatrixImage(text: string): GreyImage {
  const [symbol] = bwipjs.raw({ bcid: 'datamatrix', text });
  if (!symbol || !('pixs' in symbol)) throw new Error('bwip-js returned no Data Matrix symbol');
  const { pixs, pixx, pixy } = symbol;
  const q = DATAMATRIX_QUIET_MODULES;
  const s = DATAMATRIX_PX_PER_MODULE;
  const modulesWide = pixx + 2 * q;
  const modulesHigh = pixy + 2 * q;
  const widthPx = modulesWide * s;
  const heightPx = modulesHigh * s;
  const stride = widthPx + 1;
  const rows = Buffer.alloc(stride * heightPx, 255);
  for (let y = 0; y < heightPx; y += 1) rows[y * stride] = 0;
  for (let my = 0; my < pixy; my += 1) {
    for (let mx = 0; mx < pixx; mx += 1) {
      if (pixs[my * pixx + mx] !== 1) continue;
      for (let py = 0; py < s; py += 1) {
        const start = ((my + q) * s + py) * stride + 1 + (mx + q) * s;
        rows.fill(0, start, start + s);
      }
    }
  }
  return { png: greyPng(widthPx, heightPx, rows), widthPx, heightPx, modulesWide, modulesHigh };
}

// ---- Formatting ---------------------------------------------------------------------------------------

function signed(value: number, decimals: number): string {
  const text = Math.abs(value).toFixed(decimals);
  if (Number(text) === 0) return (0).toFixed(decimals);
  return `${value < 0 ? '-' : '+'}${text}`;
}

// Up to 2 decimals, trailing zeros dropped, a true minus: 1480, 0.93, −17.85.
function plain(value: number): string {
  return plainNumber(value);
}

const dateFormats = new Map<string, Intl.DateTimeFormat>();

function dateFormat(timeZone: string): Intl.DateTimeFormat {
  let format = dateFormats.get(timeZone);
  if (!format) {
    format = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
      hourCycle: 'h23',
      timeZoneName: 'longOffset',
    });
    dateFormats.set(timeZone, format);
  }
  return format;
}

// "2026-12-02 14:03:11 UTC" or "2026-12-02 15:03:11 UTC+01:00": date first, 24-hour clock, offset stated.
export function formatTime(iso: string, timeZone: string): string {
  const parts: Record<string, string> = {};
  for (const p of dateFormat(timeZone).formatToParts(new Date(iso))) parts[p.type] = p.value;
  const name = parts.timeZoneName ?? 'GMT';
  const offset = name === 'GMT' || name === 'GMT+00:00' ? 'UTC' : name.replace('GMT', 'UTC');
  return `${parts.year}-${parts.month}-${parts.day} ${parts.hour}:${parts.minute}:${parts.second} ${offset}`;
}

// Values and limits print from the same table the station screen uses, so a minimum reads "≥" on both.
function formatCheckValue(check: TravelerCheck): string {
  return valueText(check);
}

function formatCheckLimit(check: TravelerCheck): string {
  return limitText(check);
}

/** What the unit is, as the paper must say it before anything else: released, rejected or held. */
export type Disposition = 'release' | 'reject' | 'hold';

export function dispositionOf(data: Pick<TravelerData, 'verdict' | 'hold'>): Disposition {
  if (data.hold) return 'hold';
  return data.verdict === 'pass' ? 'release' : 'reject';
}

// ---- Drawing ------------------------------------------------------------------------------------------

type Doc = PDFKit.PDFDocument;
type Face = BarlowFace;
interface LineOptions {
  color?: string;
  // Given a width, the text is aligned within it and cut with an ellipsis when longer.
  width?: number;
  align?: 'left' | 'right' | 'center';
}

const INK = '#000000';
const SOFT = '#4d4d4d';
const RULE = '#8c8c8c';
const TINT = '#e8e8e8';
const MARGIN = 36;
const FOOTER_H = 22;

class Page {
  y = MARGIN;
  readonly left = MARGIN;
  readonly right: number;
  readonly width: number;
  readonly bottom: number;

  constructor(
    readonly doc: Doc,
    readonly data: TravelerData,
  ) {
    this.right = doc.page.width - MARGIN;
    this.width = this.right - this.left;
    this.bottom = doc.page.height - MARGIN - FOOTER_H;
  }

  // One line of text. Alignment and truncation are done here rather than by pdfkit's line wrapper, which
  // costs more than the drawing itself for short single-line strings.
  text(face: Face, size: number, str: string, x: number, y: number, options: LineOptions = {}): void {
    const { doc } = this;
    doc
      .font(face)
      .fontSize(size)
      .fillColor(options.color ?? INK);
    let line = str;
    const width = options.width;
    // No Barlow glyph is wider than 1 em, so short left-aligned text needs no measuring.
    if (width !== undefined && ((options.align ?? 'left') !== 'left' || str.length * size > width)) {
      let measured = doc.widthOfString(line);
      if (measured > width) {
        while (line.length > 1 && doc.widthOfString(`${line}…`) > width) line = line.slice(0, -1).trimEnd();
        line = `${line}…`;
        measured = doc.widthOfString(line);
      }
      if (options.align === 'right') x += width - measured;
      else if (options.align === 'center') x += (width - measured) / 2;
    }
    doc.text(line, x, y, { lineBreak: false });
  }

  // One line that must be read whole (a recipe name): shrinks down to minSize before it is ever cut.
  fitText(
    face: Face,
    size: number,
    str: string,
    x: number,
    y: number,
    width: number,
    minSize = 7,
    color = INK,
  ): void {
    let s = size;
    this.doc.font(face);
    while (s > minSize && this.doc.fontSize(s).widthOfString(str) > width) s -= 0.5;
    this.text(face, s, str, x, y + (size - s) * 0.7, { width, color });
  }

  label(str: string, x: number, y: number, options: LineOptions = {}): void {
    this.text('semiBold', 6.5, str.toUpperCase(), x, y, { color: SOFT, ...options });
  }

  field(
    label: string,
    value: string,
    x: number,
    y: number,
    width: number,
    face: Face = 'regular',
    fit = false,
  ): void {
    this.label(label, x, y);
    if (fit) this.fitText(face, 9.5, value, x, y + 8.5, width);
    else this.text(face, 9.5, value, x, y + 8.5, { width });
  }

  rule(y: number, weight = 0.5, color = RULE, x0 = this.left, x1 = this.right): void {
    this.doc.save().moveTo(x0, y).lineTo(x1, y).lineWidth(weight).strokeColor(color).stroke().restore();
  }

  // A section heading: caps label on a hairline; returns the y below it.
  heading(title: string, y = this.y, x0 = this.left, x1 = this.right): number {
    this.text('bold', 7.5, title.toUpperCase(), x0, y, {});
    this.rule(y + 10.5, 0.75, INK, x0, x1);
    return y + 14;
  }

  ensure(height: number): void {
    if (this.y + height <= this.bottom) return;
    this.doc.addPage();
    this.y = MARGIN;
    this.text('bold', 9, `Unit ${this.data.serial}: calibration traveler (continued)`, this.left, this.y);
    this.rule(this.y + 14, 1, INK);
    this.y += 22;
  }
}

// Marks that say the state by shape as well as by words: a ring with a tick for good, a filled square
// with a cross for bad, an open ring for pending. They survive monochrome printers and colour blindness.
export function markGood(doc: Doc, cx: number, cy: number, r: number, color = INK): void {
  doc
    .save()
    .lineWidth(Math.max(1, r / 5))
    .strokeColor(color)
    .circle(cx, cy, r)
    .stroke();
  doc
    .moveTo(cx - r * 0.5, cy + r * 0.02)
    .lineTo(cx - r * 0.12, cy + r * 0.42)
    .lineTo(cx + r * 0.55, cy - r * 0.4)
    .lineWidth(Math.max(1.2, r / 4))
    .lineCap('round')
    .lineJoin('round')
    .stroke()
    .restore();
}

export function markBad(doc: Doc, cx: number, cy: number, r: number, ink = INK, paper = '#ffffff'): void {
  doc
    .save()
    .rect(cx - r, cy - r, 2 * r, 2 * r)
    .fill(ink);
  const k = r * 0.5;
  doc
    .moveTo(cx - k, cy - k)
    .lineTo(cx + k, cy + k)
    .moveTo(cx + k, cy - k)
    .lineTo(cx - k, cy + k)
    .lineWidth(Math.max(1.2, r / 3.2))
    .lineCap('round')
    .strokeColor(paper)
    .stroke()
    .restore();
}

function markPending(doc: Doc, cx: number, cy: number, r: number): void {
  doc
    .save()
    .lineWidth(Math.max(1, r / 5))
    .strokeColor(INK)
    .dash(r / 2.5, { space: r / 3.5 })
    .circle(cx, cy, r)
    .stroke();
  doc.undash().restore();
}

function markWarning(doc: Doc, x: number, y: number, size: number): void {
  const h = size * 0.88;
  doc
    .save()
    .moveTo(x + size / 2, y)
    .lineTo(x + size, y + h)
    .lineTo(x, y + h)
    .closePath()
    .lineWidth(1.6)
    .lineJoin('round')
    .strokeColor(INK)
    .stroke();
  doc
    .rect(x + size / 2 - size * 0.045, y + h * 0.32, size * 0.09, h * 0.36)
    .rect(x + size / 2 - size * 0.045, y + h * 0.76, size * 0.09, size * 0.09)
    .fill(INK)
    .restore();
}

function drawReprintWatermark(page: Page): void {
  const { doc } = page;
  const cx = doc.page.width / 2;
  const cy = doc.page.height / 2;
  doc.save().rotate(-35, { origin: [cx, cy] });
  page.text('bold', 96, 'REPRINT', cx - 220, cy - 58, { width: 440, align: 'center', color: '#eeeeee' });
  doc.restore();
}

function drawHeader(page: Page): void {
  const { doc, data, left, right } = page;
  const y = page.y;
  page.text('bold', 17, data.companyName, left, y);
  page.text(
    'regular',
    9.5,
    data.lineName ? `${data.plantName} · ${data.lineName}` : data.plantName,
    left,
    y + 21,
  );
  page.text('semiBold', 12.5, 'Unit calibration traveler', left, y + 35, {});

  // Right: the print status stamp. A reprint is unmistakable; the original says so too.
  const stampW = 128;
  const stampH = 44;
  const sx = right - stampW;
  if (data.printNumber > 1) {
    doc.save().rect(sx, y, stampW, stampH).lineWidth(2).strokeColor(INK).stroke();
    doc
      .rect(sx + 3, y + 3, stampW - 6, stampH - 6)
      .lineWidth(0.75)
      .stroke()
      .restore();
    page.text('bold', 17, `REPRINT ${data.printNumber}`, sx, y + 7, {
      width: stampW,
      align: 'center',
    });
    page.text('semiBold', 7, `print no. ${data.printNumber}; the original was no. 1`, sx, y + 28, {
      width: stampW,
      align: 'center',
    });
  } else {
    doc.save().rect(sx, y, stampW, stampH).lineWidth(0.75).strokeColor(INK).stroke().restore();
    page.text('bold', 13, 'ORIGINAL', sx, y + 9, { width: stampW, align: 'center' });
    page.text('semiBold', 7, 'print no. 1', sx, y + 28, { width: stampW, align: 'center' });
  }
  page.y = y + 50;
  page.rule(page.y, 2, INK);
  page.y += 6;
  drawDisposition(page);
}

// A failed or held unit's traveler says so before anything else, in a solid band no one can misread:
// the document travels with the unit to repair or to the hold area, not down the line.
function drawDisposition(page: Page): void {
  const { doc, data, left, right } = page;
  const disposition = dispositionOf(data);
  if (disposition === 'release') return;
  const y = page.y;
  const h = 42;
  doc
    .save()
    .rect(left, y, right - left, h)
    .fill(INK)
    .restore();
  markBad(doc, left + 21, y + h / 2, 12, '#ffffff', INK);
  const title = disposition === 'hold' ? 'ON HOLD: DO NOT SHIP' : 'REJECT: DO NOT SHIP';
  page.text('bold', 19, title, left + 44, y + 3, { color: '#ffffff' });
  const why =
    disposition === 'hold'
      ? `Hold: ${data.hold?.reason ?? 'no reason recorded'}. Keep the unit in the hold area until quality releases it.`
      : 'The unit failed calibration: it goes to repair or quality with this traveler.';
  page.fitText('semiBold', 9, why, left + 44, y + 27, right - left - 52, 6.5, '#ffffff');
  page.y = y + h + 6;
  // A failed or held unit is not waiting for programming: it must not be programmed at all.
  if (data.programming.status === 'pending') {
    markBad(page.doc, left + 8, page.y + 6, 6);
    page.text(
      'bold',
      10,
      `DO NOT PROGRAM: the unit ${disposition === 'hold' ? 'is on hold' : 'failed calibration'}`,
      left + 20,
      page.y,
    );
    page.y += 18;
  }
}

function drawIdentity(page: Page, code128: GreyImage, matrix: GreyImage): void {
  const { doc, data, left, right } = page;
  const y = page.y;
  const height = 84;

  // Serial, large, with its Code 128 beneath: X = 0.9 pt (0.32 mm), bars 34 pt tall.
  const moduleX = 0.9;
  const barW = code128.modulesWide * moduleX;
  const barTop = y + 32;
  // Model and component lots in the middle, right of the serial and its barcode.
  const mx = left + Math.max(200, barW - 10 * moduleX) + 14;

  // The serial is printed as large as fits its column (22 pt at most), so long serials never overlap.
  page.label('Serial number', left, y);
  const serialWidth22 = doc.font('bold').fontSize(22).widthOfString(data.serial);
  const serialSize = Math.max(11, Math.min(22, (22 * (mx - left - 10)) / serialWidth22));
  page.text('bold', serialSize, data.serial, left, y + 8 + (22 - serialSize) * 0.6);
  doc.image(code128.png, left - 10 * moduleX, barTop, { width: barW, height: 32 });
  page.text('semiBold', 8, data.serial, left, barTop + 34, {});

  const dmSize = 74;
  const dmX = right - dmSize;
  const colW = (dmX - 14 - mx) / 2;
  // Model and recipe get the whole width of the column and shrink rather than lose their ends.
  page.field('Model', data.model.name, mx, y, colW * 2, 'semiBold', true);
  page.field('Recipe', `${data.recipe.name} v${data.recipe.version}`, mx, y + 21, colW * 2, 'regular', true);
  page.field('Pole pairs', String(data.model.polePairs), mx, y + 42, colW);
  page.field('Hall board lot', data.lots.hallBoard, mx + colW, y + 42, colW);
  page.field('Magnet ring lot', data.lots.magnetRing, mx, y + 63, colW);
  page.field('Stator lot', data.lots.stator, mx + colW, y + 63, colW);

  // Data Matrix on the right: 2-module quiet zone inside the image.
  doc.image(matrix.png, dmX, y - 2, { width: dmSize, height: dmSize });
  page.text('regular', 6, `${TRAVELER_CODE_FORMAT} code: serial, offset, recipe`, dmX - 20, y + dmSize, {
    width: dmSize + 20,
    align: 'right',
    color: SOFT,
  });

  page.y = y + height + 2;
  page.rule(page.y, 0.75, INK);
  page.y += 8;
}

function drawResult(page: Page): void {
  const { doc, data, left, right } = page;
  const y = page.y;
  const h = 70;
  const failed = data.checks.filter((c) => !c.passed);

  // Verdict block: PASS is an outlined box with a ringed tick; FAIL is a solid box with a crossed square.
  const vw = 178;
  const pass = data.verdict === 'pass';
  const paper = pass ? INK : '#ffffff';
  if (pass) doc.save().rect(left, y, vw, h).lineWidth(2.5).strokeColor(INK).stroke().restore();
  else doc.save().rect(left, y, vw, h).fill(INK).restore();
  page.label('Verdict', left + 10, y + 8, { color: pass ? SOFT : '#d0d0d0' });
  if (pass) markGood(doc, left + 29, y + 35, 15);
  else markBad(doc, left + 29, y + 35, 13, '#ffffff', INK);
  page.text('bold', 32, pass ? 'PASS' : 'FAIL', left + 52, y + 15, { color: paper });
  const summary =
    failed.length === 0
      ? data.checks.length === 1
        ? 'The one check passed'
        : `All ${data.checks.length} checks passed`
      : `${failed.length} of ${data.checks.length} checks failed (see below)`;
  page.text('semiBold', 8.5, summary, left + 10, y + 56, { width: vw - 20, color: paper });

  // Offset: the number the station programs, in degrees and in firmware counts.
  const ox = left + vw + 16;
  page.label('Hall offset (electrical degrees)', ox, y);
  page.text('bold', 28, formatOffsetDeg(data.offsetDeg), ox, y + 8);
  page.label('Firmware counts', ox, y + 42);
  page.text('semiBold', 12, `${signed(data.offsetCounts, 0)}`, ox, y + 50);
  const countsW = doc.font('semiBold').fontSize(12).widthOfString(signed(data.offsetCounts, 0));
  page.text('regular', 8.5, `of ${data.countsPerTurn} per electrical turn`, ox + countsW + 5, y + 53, {
    color: SOFT,
  });

  // Run conditions on the right.
  const rx = right - 128;
  doc
    .save()
    .moveTo(rx - 12, y)
    .lineTo(rx - 12, y + h)
    .lineWidth(0.5)
    .strokeColor(RULE)
    .stroke()
    .restore();
  // The speed the speed check judged, so the header and the check row never disagree.
  const speedCheck = data.checks.find((c) => c.code === 'speed.within_window');
  const speed = typeof speedCheck?.value === 'number' ? speedCheck.value : data.speedRpm;
  page.field('Speed', `${plain(speed)} rpm`, rx, y, 128);
  page.field('Electrical turns measured', plain(data.electricalTurns), rx, y + 24, 128);
  page.field(
    'Lag, forward vs reverse',
    data.lagDeg === undefined ? 'one direction only' : formatOffsetDeg(data.lagDeg),
    rx,
    y + 48,
    128,
  );

  page.y = y + h + 10;
}

function drawResidualsAndTimes(page: Page): void {
  const { data, left, right } = page;
  const gap = 18;
  const leftW = 210;
  const y0 = page.y;

  // Per-edge residuals: each edge type's mean minus the offset, electrical degrees.
  let y = page.heading('Per-edge residuals (° electrical)', y0, left, left + leftW);
  const cols = [left, left + 70, left + 140];
  page.label('Sensor', cols[0], y);
  page.label('Rising edge', cols[1], y, { width: 64, align: 'right' });
  page.label('Falling edge', cols[2], y, { width: 64, align: 'right' });
  y += 10;
  for (const sensor of SENSORS) {
    const rise = data.edges.find((e) => e.sensor === sensor && e.edge === 'rise');
    const fall = data.edges.find((e) => e.sensor === sensor && e.edge === 'fall');
    page.text('semiBold', 9.5, `Hall ${sensor}`, cols[0], y);
    page.text('regular', 9.5, `${signed(rise?.residualDeg ?? NaN, 2)}°`, cols[1], y, {
      width: 64,
      align: 'right',
    });
    page.text('regular', 9.5, `${signed(fall?.residualDeg ?? NaN, 2)}°`, cols[2], y, {
      width: 64,
      align: 'right',
    });
    y += 11.5;
    page.rule(y - 1.5, 0.25, RULE, left, left + leftW);
  }
  const residuals = data.edges.map((e) => e.residualDeg);
  page.label('Spread (max - min)', cols[0], y + 2);
  page.text('semiBold', 9.5, `${(Math.max(...residuals) - Math.min(...residuals)).toFixed(2)}°`, cols[2], y, {
    width: 64,
    align: 'right',
  });
  const leftBottom = y + 11.5;

  // Traceability: who, where, when, with what.
  const tx = left + leftW + gap;
  let ty = page.heading('Traceability', y0, tx, right);
  const tw = (right - tx) / 2;
  const tz = data.timeZone;
  page.field('Station', data.stationName, tx, ty, tw - 8);
  page.field('Operator', data.operatorName, tx + tw, ty, tw);
  ty += 20;
  page.field('Measured', formatTime(data.measuredAt, tz), tx, ty, tw - 8, 'regular');
  page.field('Computed', formatTime(data.computedAt, tz), tx + tw, ty, tw, 'regular');
  ty += 20;
  // The recipe's full name is printed whole beside the serial; its version is what traces the limits.
  page.field('Recipe version', `v${data.recipe.version}`, tx, ty, tw - 8, 'regular');
  page.field('Calculation engine', data.engineVersion, tx + tw, ty, tw, 'regular');

  page.y = Math.max(leftBottom, ty + 20) + 8;
}

const CHECK_COLS = { mark: 40, code: 118, value: 56, limit: 70 };
const SENTENCE_PT = 7.5;

function drawChecks(page: Page): void {
  const { doc, data, left, right } = page;
  const failed = data.checks.filter((c) => !c.passed).length;
  page.ensure(40);
  let y = page.heading(failed ? `Checks: ${failed} failed` : 'Checks: all passed');
  const x = {
    mark: left,
    code: left + CHECK_COLS.mark,
    value: left + CHECK_COLS.mark + CHECK_COLS.code,
    limit: left + CHECK_COLS.mark + CHECK_COLS.code + CHECK_COLS.value,
    sentence: left + CHECK_COLS.mark + CHECK_COLS.code + CHECK_COLS.value + CHECK_COLS.limit + 8,
  };
  const sentenceW = right - x.sentence;
  const head = (yy: number): number => {
    page.label('Result', x.mark + 2, yy);
    page.label('Check (code)', x.code, yy);
    page.label('Measured', x.value, yy, { width: CHECK_COLS.value - 10, align: 'right' });
    page.label('Limit', x.limit, yy);
    page.label('What it means', x.sentence, yy);
    return yy + 10;
  };
  y = head(y);
  for (const check of data.checks) {
    const face: Face = check.passed ? 'regular' : 'semiBold';
    const limit = formatCheckLimit(check);
    const limitH = doc
      .font('regular')
      .fontSize(8)
      .heightOfString(limit, { width: CHECK_COLS.limit - 4 });
    const textH = doc.font(face).fontSize(SENTENCE_PT).heightOfString(check.sentence, { width: sentenceW });
    const rowH = Math.max(17, textH + 3.5, limitH + 3.5);
    if (y + rowH > page.bottom) {
      page.y = y;
      page.ensure(rowH + 24);
      y = head(page.heading('Checks (continued)'));
    }
    if (!check.passed)
      doc
        .save()
        .rect(left, y, right - left, rowH)
        .fill(TINT)
        .restore();
    const cy = y + 7;
    if (check.passed) markGood(doc, x.mark + 7, cy, 4.5);
    else markBad(doc, x.mark + 7, cy, 4.5);
    page.text(check.passed ? 'semiBold' : 'bold', 8, check.passed ? 'PASS' : 'FAIL', x.mark + 16, y + 2.5);
    // People read the plain name; the stable code stays in small print for those who key on it.
    page.fitText(face, 8, checkName(check.code), x.code, y + 2.5, CHECK_COLS.code - 6, 6.5);
    page.text('regular', 5.5, check.code, x.code, y + 11, { width: CHECK_COLS.code - 6, color: SOFT });
    page.fitText(face, 8, formatCheckValue(check), x.value, y + 2.5, CHECK_COLS.value - 10, 6);
    // A limit can be a list (the valid hall states): it wraps in its cell rather than being cut.
    doc
      .font('regular')
      .fontSize(8)
      .fillColor(INK)
      .text(limit, x.limit, y + 2.5, { width: CHECK_COLS.limit - 4 });
    doc
      .font(face)
      .fontSize(SENTENCE_PT)
      .fillColor(INK)
      .text(check.sentence, x.sentence, y + 2.5, { width: sentenceW });
    y += rowH;
    page.rule(y, 0.25);
  }
  page.y = y + 8;
}

function programmingLine(p: ProgrammingConfirmation): string {
  switch (p.status) {
    case 'pending':
      return 'PENDING: the station has not yet confirmed writing the offset into the unit';
    case 'confirmed':
      return 'CONFIRMED: the value read back from the unit equals the value written';
    case 'mismatch':
      return 'MISMATCH: the value read back differs from the value written; do not ship this unit';
  }
}

function drawProgramming(page: Page): void {
  const { doc, data, left, right } = page;
  // A rejected or held unit that was never programmed says DO NOT PROGRAM in its top band instead.
  if (data.programming.status === 'pending' && dispositionOf(data) !== 'release') return;
  page.ensure(40);
  let y = page.heading('Offset programming');
  const p = data.programming;
  const line = programmingLine(p);
  if (p.status === 'confirmed') markGood(doc, left + 8, y + 8, 7);
  else if (p.status === 'mismatch') markBad(doc, left + 8, y + 8, 7);
  else markPending(doc, left + 8, y + 8, 7);
  page.text('semiBold', 9.5, line, left + 22, y + 2.5, {
    width: right - left - 22,
  });
  y += 17;
  if (p.status !== 'pending') {
    const x = left + 22;
    const w = (right - x) / 5;
    page.field('Written (counts)', String(p.writtenCounts), x, y, w - 8);
    page.field(
      'Read back (counts)',
      String(p.readBackCounts),
      x + w,
      y,
      w - 8,
      p.status === 'mismatch' ? 'bold' : 'regular',
    );
    page.field('Checksum', p.checksum ?? '—', x + 2 * w, y, w - 8);
    page.field('Confirmed at', formatTime(p.confirmedAt, data.timeZone), x + 3 * w, y, 2 * w);
    y += 22;
  }
  page.y = y + 4;
}

function drawSafety(page: Page): void {
  const { doc, left, right } = page;
  const pad = 6;
  const textX = left + 40;
  const textW = right - pad - textX;
  doc.font('regular').fontSize(8);
  const lines = SAFETY_CAUTIONS.map((c) => doc.heightOfString(c, { width: textW - 8 }));
  const h = pad + 12 + lines.reduce((a, b) => a + b + 1, 0) + pad - 1;
  page.ensure(h + 6);
  const y = page.y;
  doc
    .save()
    .rect(left, y, right - left, h)
    .lineWidth(1.25)
    .strokeColor(INK)
    .stroke()
    .restore();
  markWarning(doc, left + 9, y + pad + 2, 22);
  page.text('bold', 9, SAFETY_TITLE.toUpperCase(), textX, y + pad, {});
  let ly = y + pad + 12;
  SAFETY_CAUTIONS.forEach((caution, i) => {
    doc
      .save()
      .rect(textX, ly + 4, 3, 3)
      .fill(INK)
      .restore();
    doc
      .font('regular')
      .fontSize(8)
      .fillColor(INK)
      .text(caution, textX + 8, ly, { width: textW - 8 });
    ly += lines[i] + 1;
  });
  page.y = y + h + 4;
}

// Hand-written release fields, printed only where the page has room for them: travelers are signed
// at the end of the line before they are filed.
function drawSignOff(page: Page): void {
  const { left, right } = page;
  if (page.y + 36 > page.bottom) return;
  const y = page.heading('Release', page.y + 2);
  const w = (right - left) / 3;
  ['Released by (name)', 'Signature', 'Date'].forEach((label, i) => {
    const x = left + i * w;
    page.rule(y + 18, 0.5, INK, x, x + w - 14);
    page.label(label, x, y + 21);
  });
  page.y = y + 30;
}

function drawFooters(doc: Doc, data: TravelerData): void {
  const range = doc.bufferedPageRange();
  const generated = formatTime(data.generatedAt, data.timeZone);
  const printed = data.printNumber > 1 ? `REPRINT ${data.printNumber}` : 'Original print';
  for (let i = range.start; i < range.start + range.count; i += 1) {
    doc.switchToPage(i);
    const left = MARGIN;
    const right = doc.page.width - MARGIN;
    const y = doc.page.height - MARGIN - FOOTER_H + 8;
    // Writing below the bottom margin would make pdfkit open a new page.
    const bottomMargin = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    doc.save().moveTo(left, y).lineTo(right, y).lineWidth(0.75).strokeColor(INK).stroke().restore();
    doc
      .font('regular')
      .fontSize(7)
      .fillColor(SOFT)
      .text(
        `Unit ${data.serial} · ${printed} · generated ${generated} · times in ${data.timeZone} · Phasewright traveler, code format ${TRAVELER_CODE_FORMAT}`,
        left,
        y + 4,
        { lineBreak: false },
      );
    doc
      .font('semiBold')
      .fontSize(7)
      .fillColor(INK)
      .text(`Page ${i - range.start + 1} of ${range.count}`, right - 80, y + 4, {
        width: 80,
        align: 'right',
        lineBreak: false,
      });
    doc.page.margins.bottom = bottomMargin;
  }
}

/**
 * Renders the unit traveler. Rejects invalid data with a TravelerDataError naming every bad field.
 * Times print in data.timeZone (UTC unless given); the PDF's CreationDate is data.generatedAt.
 */
export async function renderTravelerPdf(input: TravelerDataInput): Promise<Buffer> {
  const data = parseTravelerData(input);
  const code128 = code128Image(data.serial);
  const matrix = dataMatrixImage(formatTravelerCode(data));
  const generatedAt = new Date(data.generatedAt);

  const doc = new PDFDocument({
    size: [...PAGE_SIZES_PT[data.pageSize]],
    margin: MARGIN,
    bufferPages: true,
    autoFirstPage: true,
    font: '',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: `Unit calibration traveler ${data.serial}`,
      Author: `${data.companyName}, ${data.plantName}`,
      Subject: `Hall offset calibration of unit ${data.serial}: ${data.verdict.toUpperCase()}${dispositionOf(data) === 'release' ? '' : dispositionOf(data) === 'hold' ? ', ON HOLD' : ', REJECT'}`,
      Keywords: `traveler ${data.serial} ${data.recipe.name}@${data.recipe.version} print ${data.printNumber}`,
      Creator: 'Phasewright',
      Producer: 'Phasewright traveler renderer',
      CreationDate: generatedAt,
      ModDate: generatedAt,
    },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (chunk: Buffer) => chunks.push(chunk));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  // pdfkit's types admit only bytes or a path, but it takes a parsed font too (see fonts.ts).
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);

  const page = new Page(doc, data);
  if (data.printNumber > 1) drawReprintWatermark(page);
  drawHeader(page);
  drawIdentity(page, code128, matrix);
  drawResult(page);
  drawResidualsAndTimes(page);
  drawChecks(page);
  drawProgramming(page);
  drawSafety(page);
  drawSignOff(page);
  drawFooters(doc, data);

  doc.end();
  return done;
}
