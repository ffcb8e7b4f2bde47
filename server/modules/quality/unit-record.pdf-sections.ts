import {
  formatTime,
  INK,
  markBad,
  markGood,
  markPending,
  RULE,
  SOFT,
  TINT,
  type Face,
  type Page,
} from '../travelers/traveler.page';
import { checkName, formatCheckLimit, formatCheckValue } from '#shared/calibration/check-guide';
import type { CalibrationView } from '#shared/schemas/calibrations';
import { TIMELINE_KIND_LABELS, type UnitRecord } from '#shared/schemas/unit-record';
import { formatOffsetDeg } from '#shared/wording';
import { DISPOSITION_WORDS } from './unit-record.wording';

// The sections of the unit's calibration record on paper after its header and identity block: each attempt
// with its checks, the recipe versions, holds and releases, the raw files and the timeline.

export type RecordPage = Page<{ serial: string }>;

export const STATUS_WORDS: Record<UnitRecord['unit']['status'], string> = {
  new: 'NOT CALIBRATED',
  calibrated: 'CALIBRATED',
  failed: 'FAILED',
  on_hold: 'ON HOLD',
  scrapped: 'SCRAPPED',
};

/** A wrapped block of text at the page's cursor; returns its height. */
export function paragraph(
  page: RecordPage,
  face: Face,
  size: number,
  str: string,
  x = page.left,
  width = page.right - x,
) {
  const { doc } = page;
  doc.font(face).fontSize(size);
  const h = doc.heightOfString(str, { width });
  page.ensure(h + 2);
  doc.fillColor(INK).text(str, x, page.y, { width });
  page.y += h + 2;
  return h;
}

export function section(page: RecordPage, title: string, room = 48) {
  page.ensure(room);
  page.y = page.heading(title, page.y + 4);
}

const COL = { mark: 36, name: 170, value: 70, limit: 90 };

function drawChecks(page: RecordPage, c: CalibrationView) {
  const { doc, left, right } = page;
  const checks = c.result?.checks ?? [];
  if (checks.length === 0) return;
  const x = {
    mark: left + 10,
    name: left + 10 + COL.mark,
    value: left + 10 + COL.mark + COL.name,
    limit: left + 10 + COL.mark + COL.name + COL.value + 8,
    sentence: left + 10 + COL.mark + COL.name + COL.value + COL.limit + 12,
  };
  const head = () => {
    page.ensure(24);
    page.label('Result', x.mark, page.y);
    page.label('Check', x.name, page.y);
    page.label('Measured', x.value, page.y, { width: COL.value, align: 'right' });
    page.label('Limit', x.limit, page.y);
    page.label('What it means', x.sentence, page.y);
    page.y += 9;
  };
  head();
  for (const check of checks) {
    const face: Face = check.passed ? 'regular' : 'semiBold';
    const sentenceW = right - x.sentence;
    doc.font(face).fontSize(6.5);
    const textH = doc.heightOfString(check.message, { width: sentenceW });
    const rowH = Math.max(15, textH + 3);
    if (page.y + rowH > page.bottom) {
      page.ensure(rowH + 24);
      head();
    }
    const y = page.y;
    if (!check.passed)
      doc
        .save()
        .rect(left + 8, y, right - left - 8, rowH)
        .fill(TINT)
        .restore();
    if (check.passed) markGood(doc, x.mark + 4, y + 6, 3.8);
    else markBad(doc, x.mark + 4, y + 6, 3.8);
    page.text(check.passed ? 'semiBold' : 'bold', 7, check.passed ? 'PASS' : 'FAIL', x.mark + 11, y + 2.5);
    page.fitText(face, 7.5, checkName(check.code), x.name, y + 1.5, COL.name - 6, 6);
    page.text('regular', 5.5, check.code, x.name, y + 9.5, { width: COL.name - 6, color: SOFT });
    page.fitText(face, 7.5, formatCheckValue(check), x.value, y + 2.5, COL.value, 6);
    page.fitText('regular', 7.5, formatCheckLimit(check), x.limit, y + 2.5, COL.limit, 5.5);
    doc
      .font(face)
      .fontSize(6.5)
      .fillColor(INK)
      .text(check.message, x.sentence, y + 2.5, { width: sentenceW });
    page.y = y + rowH;
    page.rule(page.y, 0.25, RULE, left + 8);
  }
}

export function drawAttempt(page: RecordPage, record: UnitRecord, c: CalibrationView, timeZone: string) {
  const { doc, left, right } = page;
  page.ensure(92);
  const y = page.y + 2;
  const station = c.purpose === 'station';
  if (c.verdict === 'pass') markGood(doc, left + 7, y + 7, 6.5);
  else if (c.verdict === 'fail') markBad(doc, left + 7, y + 7, 6);
  else markPending(doc, left + 7, y + 7, 6.5);
  const what = station
    ? c.attempt === null
      ? `Station result (not counted as an attempt) · ${c.verdict.toUpperCase()}`
      : `Attempt ${c.attempt} of ${c.maxAttempts} · ${c.verdict.toUpperCase()}`
    : `Recomputation (analysis only, the unit is unchanged) · ${c.verdict.toUpperCase()}`;
  page.text('bold', 11, what, left + 20, y + 1);
  page.text('regular', 8.5, c.stationName, left + 20, y + 1, { width: right - left - 20, align: 'right' });
  page.y = y + 18;
  const w = (right - left - 10) / 4;
  const x = left + 10;
  const measurement = record.measurements.find((m) => m.measurementId === c.measurementId);
  page.field('Measured', formatTime(c.receivedAt, timeZone), x, page.y, w - 8);
  page.field('Computed', formatTime(c.computedAt, timeZone), x + w, page.y, w - 8);
  page.field('Operator at the panel', measurement?.operatorName ?? 'not recorded', x + 2 * w, page.y, w - 8);
  page.field(
    'Offset',
    c.offsetDeg === null ? '—' : `${formatOffsetDeg(c.offsetDeg)} (${c.offsetCounts} counts)`,
    x + 3 * w,
    page.y,
    w,
    'semiBold',
  );
  page.y += 20;
  page.field(
    'Recipe version',
    `${c.recipe.name ?? 'recipe'} v${c.recipe.version}`,
    x,
    page.y,
    2 * w - 8,
    'regular',
    true,
  );
  page.field('Calculation engine', c.engineVersion, x + 2 * w, page.y, w - 8);
  page.field('Measurement id', c.measurementId, x + 3 * w, page.y, w);
  page.y += 22;
  if (!station && c.reason) paragraph(page, 'regular', 8, `Why recomputed: ${c.reason}`, x);
  if (c.error) paragraph(page, 'semiBold', 8.5, `The data could not be used: ${c.error.message}`, x);
  drawChecks(page, c);
  const programmed = record.programming.filter((p) => p.calibrationId === c.calibrationId);
  for (const p of programmed) {
    page.ensure(16);
    const py = page.y + 2;
    if (p.matches) markGood(doc, x + 4, py + 5, 4.5);
    else markBad(doc, x + 4, py + 5, 4.5);
    page.text(
      p.matches ? 'semiBold' : 'bold',
      8.5,
      p.matches
        ? `Programming CONFIRMED: written ${p.writtenCounts}, read back ${p.readBackCounts} counts${p.checksum ? `, checksum ${p.checksum}` : ''} · ${formatTime(p.confirmedAt, timeZone)}`
        : `Programming MISMATCH: expected ${p.expectedCounts}, written ${p.writtenCounts}, read back ${p.readBackCounts} counts · ${formatTime(p.confirmedAt, timeZone)}`,
      x + 14,
      py,
      { width: right - x - 14 },
    );
    page.y = py + 13;
  }
  if (station && c.verdict === 'pass' && programmed.length === 0)
    paragraph(
      page,
      'regular',
      8,
      'Programming: the station has not confirmed writing this offset into the unit.',
      x,
    );
  page.y += 4;
  page.rule(page.y, 0.5, INK);
  page.y += 4;
}

export function drawRecipes(page: RecordPage, record: UnitRecord) {
  if (record.recipes.length === 0) return;
  section(page, 'Recipe versions used and their limits');
  const half = (page.right - page.left) / 2;
  for (const r of record.recipes) {
    page.ensure(16 + Math.ceil(r.limits.length / 2) * 11);
    page.text('semiBold', 9.5, `${r.name ?? 'recipe'} v${r.version}`, page.left, page.y);
    page.y += 13;
    r.limits.forEach((l, i) => {
      const x = page.left + (i % 2) * half;
      page.text('regular', 8, l.label, x + 8, page.y, { width: half - 100, color: SOFT });
      page.text('semiBold', 8, l.value, x + half - 92, page.y, { width: 84 });
      if (i % 2 === 1 || i === r.limits.length - 1) page.y += 11;
    });
    page.y += 4;
  }
}

export function drawHolds(page: RecordPage, record: UnitRecord, timeZone: string) {
  section(page, 'Holds and releases');
  if (record.holds.length === 0) {
    paragraph(page, 'regular', 8.5, 'The unit has never been on hold.');
    return;
  }
  for (const h of record.holds) {
    paragraph(
      page,
      'semiBold',
      8.5,
      `Held ${formatTime(h.heldAt, timeZone)} by ${h.heldBy}${h.investigation ? ` under ${h.investigation}` : ''}: ${h.reason}`,
    );
    paragraph(
      page,
      'regular',
      8.5,
      h.releasedAt
        ? `Released ${formatTime(h.releasedAt, timeZone)} by ${h.releasedBy ?? 'not recorded'}, disposition "${h.disposition ? DISPOSITION_WORDS[h.disposition] : '—'}": ${h.releaseReason ?? '—'}${h.attemptBudget !== null ? ` (new attempt budget ${h.attemptBudget})` : ''}`
        : 'Not released: the unit is on hold.',
      page.left + 10,
    );
    page.y += 3;
  }
  if (record.investigations.length)
    paragraph(
      page,
      'regular',
      8.5,
      `Investigations linking the unit: ${record.investigations.map((i) => `${i.reference} "${i.title}" (${i.status})`).join('; ')}.`,
    );
}

export function drawFiles(page: RecordPage, record: UnitRecord, timeZone: string) {
  section(page, 'Raw files: each measurement as the station posted it');
  if (record.measurements.length === 0) {
    paragraph(page, 'regular', 8.5, 'No measurement stored.');
    return;
  }
  for (const m of record.measurements) {
    page.ensure(22);
    page.text(
      'semiBold',
      8,
      `${m.measurementId} · ${m.stationName} · ${m.source === 'capture' ? 'capture CSV' : 'timings JSON'} · ${formatTime(m.receivedAt, timeZone)}`,
      page.left,
      page.y,
      { width: page.right - page.left },
    );
    page.text('regular', 7, `SHA-256 stored at intake: ${m.payloadSha256}`, page.left + 10, page.y + 10, {
      color: SOFT,
    });
    page.y += 21;
  }
  paragraph(
    page,
    'regular',
    7.5,
    "The record's ZIP holds each file exactly as posted, with a manifest of SHA-256 sums of the files.",
  );
}

export function drawTimeline(page: RecordPage, record: UnitRecord, timeZone: string) {
  section(page, 'Who did what and when');
  const { doc, left, right } = page;
  const x = { at: left, kind: left + 118, what: left + 192, who: right - 110 };
  const head = () => {
    page.label('When', x.at, page.y);
    page.label('What', x.kind, page.y);
    page.label('Who', x.who, page.y);
    page.y += 9;
  };
  head();
  for (const e of record.timeline) {
    const whatW = x.who - x.what - 8;
    doc.font('regular').fontSize(7.5);
    const h = Math.max(11, doc.heightOfString(e.title, { width: whatW }) + 2);
    if (page.y + h > page.bottom) {
      page.ensure(h + 24);
      head();
    }
    const y = page.y;
    page.text('regular', 7.5, formatTime(e.at, timeZone), x.at, y);
    page.text('semiBold', 7.5, TIMELINE_KIND_LABELS[e.kind], x.kind, y, { width: x.what - x.kind - 4 });
    doc
      .font(e.tone === 'bad' ? 'semiBold' : 'regular')
      .fontSize(7.5)
      .fillColor(INK)
      .text(e.title, x.what, y, { width: whatW });
    page.text('regular', 7.5, e.who ?? '—', x.who, y, { width: right - x.who });
    page.y = y + h;
    page.rule(page.y - 1, 0.2);
  }
}
