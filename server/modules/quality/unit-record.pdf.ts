import PDFDocument from 'pdfkit';
import { barlowFontSources, prepareDocumentFonts } from '../travelers/fonts';
import { drawSafety } from '../travelers/traveler.layout';
import { formatTime, INK, MARGIN, markBad, Page, SOFT, drawPageFooters } from '../travelers/traveler.page';
import { PAGE_SIZES_PT } from '../travelers/traveler.render';
import { TRAVELER_HEADER } from '../travelers/travelers.service';
import { modelName } from './unit-record.wording';
import type { UnitRecord } from '#shared/schemas/unit-record';
import { formatOffsetDeg } from '#shared/wording';
import {
  drawAttempt,
  drawFiles,
  drawHolds,
  drawRecipes,
  drawTimeline,
  paragraph,
  section,
  STATUS_WORDS,
  type RecordPage,
} from './unit-record.pdf-sections';

// The unit's calibration record on paper, in the traveler's look (its fonts, drawing kit, marks and the
// safety box): every attempt with its recipe version, engine version and checks, the programming, the
// recipe limits, holds and releases, the raw files' hashes and who did what when.

function drawHeader(page: RecordPage, record: UnitRecord, at: string, timeZone: string) {
  const { doc, left, right } = page;
  const y = page.y;
  page.text('bold', 17, TRAVELER_HEADER.companyName, left, y);
  page.text('regular', 9.5, TRAVELER_HEADER.plantName, left, y + 21);
  page.text('semiBold', 12.5, 'Unit calibration record', left, y + 35);
  const stampW = 150;
  const sx = right - stampW;
  doc.save().rect(sx, y, stampW, 44).lineWidth(0.75).strokeColor(INK).stroke().restore();
  page.label('Status when generated', sx, y + 5, { width: stampW, align: 'center' });
  page.text('bold', 14, STATUS_WORDS[record.unit.status], sx, y + 14, { width: stampW, align: 'center' });
  page.text('regular', 6.5, formatTime(at, timeZone), sx, y + 32, {
    width: stampW,
    align: 'center',
    color: SOFT,
  });
  page.y = y + 50;
  page.rule(page.y, 2, INK);
  page.y += 8;
}

function drawIdentity(page: RecordPage, record: UnitRecord) {
  const { doc, left, right } = page;
  const u = record.unit;
  const y = page.y;
  page.label('Serial number', left, y);
  page.fitText('bold', 22, u.serial, left, y + 8, 190, 11);
  const x = left + 200;
  const w = (right - x) / 3;
  page.field('Model', modelName(u.model), x, y, w * 2 - 8, 'semiBold', true);
  page.field('Work order', u.workOrder ?? '—', x + 2 * w, y, w);
  page.field('Hall-board lot', u.lots.hallBoard ?? '—', x, y + 21, w - 8);
  page.field('Magnet-ring lot', u.lots.magnetRing ?? '—', x + w, y + 21, w - 8);
  page.field('Stator lot', u.lots.stator ?? '—', x + 2 * w, y + 21, w);
  page.field(
    'Current offset',
    u.currentOffsetDeg === null ? 'none' : formatOffsetDeg(u.currentOffsetDeg),
    x,
    y + 42,
    w - 8,
    'semiBold',
  );
  page.field(
    'Attempts used',
    u.maxAttempts ? `${u.attempts} of ${u.maxAttempts}` : String(u.attempts),
    x + w,
    y + 42,
    w - 8,
  );
  page.field(
    'Programming',
    u.programmingMismatch ? 'READ-BACK MISMATCH' : 'no mismatch recorded',
    x + 2 * w,
    y + 42,
    w,
    u.programmingMismatch ? 'bold' : 'regular',
  );
  page.y = y + 66;
  if (u.status === 'on_hold') {
    const h = 30;
    doc
      .save()
      .rect(left, page.y, right - left, h)
      .fill(INK)
      .restore();
    markBad(doc, left + 16, page.y + h / 2, 9, '#ffffff', INK);
    page.text('bold', 12, 'ON HOLD: DO NOT SHIP', left + 32, page.y + 3, { color: '#ffffff' });
    page.fitText(
      'semiBold',
      8.5,
      `Hold: ${u.holdReason ?? 'no reason recorded'}`,
      left + 32,
      page.y + 18,
      right - left - 40,
      6.5,
      '#ffffff',
    );
    page.y += h + 6;
  }
  page.rule(page.y, 0.75, INK);
  page.y += 6;
}

function drawFooters(doc: PDFKit.PDFDocument, serial: string, at: string, timeZone: string) {
  drawPageFooters(
    doc,
    `Unit ${serial} · calibration record · generated ${formatTime(at, timeZone)} · times in ${timeZone} · Phasewright`,
  );
}

/**
 * Renders a unit's calibration record. Pure: the same record, time and zone give the same bytes.
 * Times print in `timeZone` (the traveler's setting).
 */
export async function renderUnitRecordPdf(
  record: UnitRecord,
  generatedAt: Date,
  timeZone: string,
): Promise<Buffer> {
  const at = generatedAt.toISOString();
  const serial = record.unit.serial;
  const doc = new PDFDocument({
    size: [...PAGE_SIZES_PT.A4],
    margin: MARGIN,
    bufferPages: true,
    autoFirstPage: true,
    font: '',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: `Unit calibration record ${serial}`,
      Author: `${TRAVELER_HEADER.companyName}, ${TRAVELER_HEADER.plantName}`,
      Subject: `Calibration record of unit ${serial}: ${STATUS_WORDS[record.unit.status]}`,
      Creator: 'Phasewright',
      Producer: 'Phasewright',
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
  // pdfkit's types admit only bytes or a path, but it takes a parsed font too (see travelers/fonts.ts).
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);
  prepareDocumentFonts(doc);

  const page: RecordPage = new Page(doc, { serial }, 'calibration record');
  drawHeader(page, record, at, timeZone);
  drawIdentity(page, record);
  section(page, `Calibration attempts and results (${record.calibrations.length})`);
  if (record.calibrations.length === 0) paragraph(page, 'regular', 9, 'The unit has not been measured yet.');
  for (const c of record.calibrations) drawAttempt(page, record, c, timeZone);
  page.y += 4;
  drawSafety(page);
  drawRecipes(page, record);
  drawHolds(page, record, timeZone);
  drawFiles(page, record, timeZone);
  drawTimeline(page, record, timeZone);
  drawFooters(doc, serial, at, timeZone);
  doc.end();
  return done;
}
