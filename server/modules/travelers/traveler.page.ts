import type { BarlowFace } from './fonts';
import { lineWidth, writeLine } from './pdf-text';
import type { TravelerCheck, TravelerData } from './traveler.types';
import {
  formatCheckLimit as limitText,
  formatCheckValue as valueText,
  plainNumber,
} from '#shared/calibration/check-guide';

// The traveler's drawing kit: number and time formats, the Page (text lines, fields, rules, headings,
// page breaks) and the state marks. The sections themselves are in traveler.layout.ts.

// ---- Formatting ---------------------------------------------------------------------------------------

// Up to 2 decimals, trailing zeros dropped, a true minus: 1480, 0.93, −17.85.
export function plain(value: number): string {
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

const two = (n: number): string => (n < 10 ? `0${n}` : `${n}`);

// "2026-12-02 14:03:11 UTC" or "2026-12-02 15:03:11 UTC+01:00": date first, 24-hour clock, offset stated.
export function formatTime(iso: string, timeZone: string): string {
  // UTC, the usual zone, is read off the date itself: formatToParts costs more than a tenth of a millisecond.
  // Same text as the formatter gives (traveler.page.test.ts checks it), for four-digit years.
  if (timeZone === 'UTC') {
    const t = new Date(iso);
    const year = t.getUTCFullYear();
    if (year >= 1000 && year <= 9999)
      return `${year}-${two(t.getUTCMonth() + 1)}-${two(t.getUTCDate())} ${two(t.getUTCHours())}:${two(t.getUTCMinutes())}:${two(t.getUTCSeconds())} UTC`;
  }
  return formatTimeInZone(iso, timeZone);
}

/** formatTime through the zone's formatter, whatever the zone (exported for its test). */
export function formatTimeInZone(iso: string, timeZone: string): string {
  const parts: Record<string, string> = {};
  for (const p of dateFormat(timeZone).formatToParts(new Date(iso))) parts[p.type] = p.value;
  const name = parts.timeZoneName ?? 'GMT';
  const offset = name === 'GMT' || name === 'GMT+00:00' ? 'UTC' : name.replace('GMT', 'UTC');
  return `${parts.year}-${parts.month}-${parts.day} ${parts.hour}:${parts.minute}:${parts.second} ${offset}`;
}

// Values and limits print from the same table the station screen uses, so a minimum reads "≥" on both.
export function formatCheckValue(check: TravelerCheck): string {
  return valueText(check);
}

export function formatCheckLimit(check: TravelerCheck): string {
  return limitText(check);
}

/** What the unit is, as the paper must say it before anything else: released, rejected or held. */
export type Disposition = 'release' | 'reject' | 'hold';

export function dispositionOf(data: Pick<TravelerData, 'verdict' | 'hold'>): Disposition {
  if (data.hold) return 'hold';
  return data.verdict === 'pass' ? 'release' : 'reject';
}

// ---- Drawing ------------------------------------------------------------------------------------------

export type Doc = PDFKit.PDFDocument;
export type Face = BarlowFace;
export interface LineOptions {
  color?: string;
  // Given a width, the text is aligned within it and cut with an ellipsis when longer.
  width?: number;
  align?: 'left' | 'right' | 'center';
}

// What drawLine expects of pdfkit's internals (0.20): the method doc.text() ends in for one line.
interface LineDrawer {
  _fragment?: (text: string, x: number, y: number, options: object) => void;
}
// Options _fragment would get from doc.text(line, x, y, { lineBreak: false }), plus the rendered width and
// word count it would otherwise measure for links and underlines, which the traveler never draws.
const FRAGMENT_OPTIONS = Object.freeze({
  lineBreak: false,
  columns: 0,
  columnGap: 18,
  rotation: 0,
  textWidth: 0,
  wordCount: 0,
});

/**
 * Draws one line of text exactly as doc.text(str, x, y, { lineBreak: false }) does. Usually written from
 * runs shaped once per process (pdf-text.ts); otherwise through the method doc.text() ends in, without
 * measuring the line twice more as doc.text() would (for links and underlines, then to advance its
 * cursor). The drawing kit always gives x and y, so pdfkit's cursor is not needed.
 */
function drawLine(doc: Doc, str: string, x: number, y: number): void {
  doc.x = x;
  doc.y = y;
  if (writeLine(doc, str, x, y)) return;
  const fragment = (doc as unknown as LineDrawer)._fragment;
  if (typeof fragment !== 'function') {
    doc.text(str, x, y, { lineBreak: false });
    return;
  }
  fragment.call(doc, str, x, y, FRAGMENT_OPTIONS);
}

/** doc.widthOfString(str) in the current font and size, from the same remembered runs as drawLine. */
function widthOf(doc: Doc, str: string): number {
  return lineWidth(doc, str) ?? doc.widthOfString(str);
}

export const INK = '#000000';
export const SOFT = '#4d4d4d';
export const RULE = '#8c8c8c';
export const TINT = '#e8e8e8';
export const MARGIN = 36;
export const FOOTER_H = 22;

/**
 * A page being drawn: the traveler's, or another unit document in the same look (the calibration record),
 * which names itself in the heading of a continued page.
 */
export class Page<D extends Pick<TravelerData, 'serial'> = TravelerData> {
  y = MARGIN;
  readonly left = MARGIN;
  readonly right: number;
  readonly width: number;
  readonly bottom: number;

  constructor(
    readonly doc: Doc,
    readonly data: D,
    readonly documentName = 'calibration traveler',
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
      let measured = widthOf(doc, line);
      if (measured > width) {
        while (line.length > 1 && widthOf(doc, `${line}…`) > width) line = line.slice(0, -1).trimEnd();
        line = `${line}…`;
        measured = widthOf(doc, line);
      }
      if (options.align === 'right') x += width - measured;
      else if (options.align === 'center') x += (width - measured) / 2;
    }
    drawLine(doc, line, x, y);
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
    while (s > minSize && widthOf(this.doc.fontSize(s), str) > width) s -= 0.5;
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
    this.text('bold', 9, `Unit ${this.data.serial}: ${this.documentName} (continued)`, this.left, this.y);
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

export function markPending(doc: Doc, cx: number, cy: number, r: number): void {
  doc
    .save()
    .lineWidth(Math.max(1, r / 5))
    .strokeColor(INK)
    .dash(r / 2.5, { space: r / 3.5 })
    .circle(cx, cy, r)
    .stroke();
  doc.undash().restore();
}

export function markWarning(doc: Doc, x: number, y: number, size: number): void {
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

/**
 * Draws every buffered page's footer: a rule, `caption` on the left and "Page i of n" on the right. Shared by
 * every document drawn with this kit (traveler, calibration record), so their footers cannot drift apart.
 */
export function drawPageFooters(doc: Doc, caption: string): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i += 1) {
    doc.switchToPage(i);
    const left = MARGIN;
    const right = doc.page.width - MARGIN;
    const y = doc.page.height - MARGIN - FOOTER_H + 8;
    // Writing below the bottom margin would make pdfkit open a new page.
    const bottomMargin = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    doc.save().moveTo(left, y).lineTo(right, y).lineWidth(0.75).strokeColor(INK).stroke().restore();
    drawLine(doc.font('regular').fontSize(7).fillColor(SOFT), caption, left, y + 4);
    // Right-aligned in the last 80 pt, as doc.text(…, { width: 80, align: 'right' }) places it.
    const numbering = `Page ${i - range.start + 1} of ${range.count}`;
    doc.font('semiBold').fontSize(7).fillColor(INK);
    drawLine(doc, numbering, right - 80 + (80 - widthOf(doc, numbering)), y + 4);
    doc.page.margins.bottom = bottomMargin;
  }
}
