// Over ~350 lines on purpose: the page layout of the traveler is one drawing, section by section; the
// code format, barcodes and fonts are in files of their own.
import type { ProgrammingConfirmation, TravelerData } from './traveler.types';
import { SENSORS } from './traveler.types';
import { signed, TRAVELER_CODE_FORMAT } from './traveler.code';
import {
  CODE128_QUIET_MODULES,
  drawCode128,
  drawDataMatrix,
  type Code128Symbol,
  type DataMatrixSymbol,
} from './traveler.barcodes';
import {
  dispositionOf,
  formatCheckLimit,
  formatCheckValue,
  formatTime,
  INK,
  markBad,
  markGood,
  markPending,
  markWarning,
  Page,
  plain,
  RULE,
  SOFT,
  TINT,
  type Doc,
  type Face,
  drawPageFooters,
} from './traveler.page';
import { paragraphHeight, writeParagraph } from './pdf-text';
import { checkName } from '#shared/calibration/check-guide';
import { formatOffsetDeg, SAFETY_CAUTIONS, SAFETY_TITLE } from '#shared/wording';

// The traveler's page layout: one section after another, top to bottom, then the footers.

/** Draws every section of the traveler into a fresh document, then its footers on every page. */
export function drawTraveler(
  doc: Doc,
  data: TravelerData,
  symbols: { code128: Code128Symbol; matrix: DataMatrixSymbol },
): void {
  const page = new Page(doc, data);
  if (data.printNumber > 1) drawReprintWatermark(page);
  drawHeader(page);
  drawIdentity(page, symbols.code128, symbols.matrix);
  drawResult(page);
  drawResidualsAndTimes(page);
  drawChecks(page);
  drawProgramming(page);
  drawSafety(page);
  drawSignOff(page);
  drawFooters(doc, data);
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

function drawIdentity(page: Page, code128: Code128Symbol, matrix: DataMatrixSymbol): void {
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
  drawCode128(doc, code128, {
    x: left - CODE128_QUIET_MODULES * moduleX,
    y: barTop,
    moduleWidth: moduleX,
    height: 32,
  });
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

  // Data Matrix on the right, its 2-module quiet zone inside the square.
  drawDataMatrix(doc, matrix, { x: dmX, y: y - 2, size: dmSize });
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
    const limitH = paragraphHeight(doc.font('regular').fontSize(8), limit, CHECK_COLS.limit - 4);
    const textH = paragraphHeight(doc.font(face).fontSize(SENTENCE_PT), check.sentence, sentenceW);
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
    writeParagraph(
      doc.font('regular').fontSize(8).fillColor(INK),
      limit,
      x.limit,
      y + 2.5,
      CHECK_COLS.limit - 4,
    );
    writeParagraph(
      doc.font(face).fontSize(SENTENCE_PT).fillColor(INK),
      check.sentence,
      x.sentence,
      y + 2.5,
      sentenceW,
    );
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

/** The safety cautions in their box (the one source is shared/wording.ts); other unit documents draw it too. */
export function drawSafety(page: Page<Pick<TravelerData, 'serial'>>): void {
  const { doc, left, right } = page;
  const pad = 6;
  const textX = left + 40;
  const textW = right - pad - textX;
  doc.font('regular').fontSize(8);
  const lines = SAFETY_CAUTIONS.map((c) => paragraphHeight(doc, c, textW - 8));
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
    writeParagraph(doc.font('regular').fontSize(8).fillColor(INK), caution, textX + 8, ly, textW - 8);
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
  const generated = formatTime(data.generatedAt, data.timeZone);
  const printed = data.printNumber > 1 ? `REPRINT ${data.printNumber}` : 'Original print';
  drawPageFooters(
    doc,
    `Unit ${data.serial} · ${printed} · generated ${generated} · times in ${data.timeZone} · Phasewright traveler, code format ${TRAVELER_CODE_FORMAT}`,
  );
}
