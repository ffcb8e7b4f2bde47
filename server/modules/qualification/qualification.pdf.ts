import PDFDocument from 'pdfkit';
import { barlowFontSources, type BarlowFace } from '../travelers/fonts';
import { markBad, markGood } from '../travelers/traveler.page';
import { PAGE_SIZES_PT } from '../travelers/traveler.render';
import { TRAVELER_HEADER } from '../travelers/travelers.service';
import type { GaugeStudyDetail, QualificationRunView } from '#shared/schemas/qualification';
import type { GaugeFigures } from '#shared/statistics/gauge-study';
import { formatSignedDeg } from '#shared/wording';

// Documents of station qualification in the traveler's look: Barlow, black ink, the company header over a
// heavy rule, caps section headings on hairlines, and the traveler's good/bad marks (shape, not colour).

const INK = '#000000';
const RULE = '#8c8c8c';
const MARGIN = 36;

class Sheet {
  y = MARGIN;
  readonly left = MARGIN;
  readonly right: number;
  constructor(readonly doc: PDFKit.PDFDocument) {
    this.right = doc.page.width - MARGIN;
  }
  text(face: BarlowFace, size: number, s: string, x: number, y: number, width?: number, color = INK) {
    this.doc
      .font(face)
      .fontSize(size)
      .fillColor(color)
      .text(s, x, y, width ? { width, lineBreak: true } : { lineBreak: false });
  }
  rule(y: number, weight = 0.5, color = RULE) {
    this.doc
      .save()
      .moveTo(this.left, y)
      .lineTo(this.right, y)
      .lineWidth(weight)
      .strokeColor(color)
      .stroke()
      .restore();
  }
  heading(title: string) {
    this.ensure(40);
    this.text('bold', 7.5, title.toUpperCase(), this.left, this.y);
    this.rule(this.y + 10.5, 0.75, INK);
    this.y += 16;
  }
  header(title: string, lineName?: string) {
    this.text('bold', 17, TRAVELER_HEADER.companyName, this.left, this.y);
    this.text(
      'regular',
      9.5,
      lineName ? `${TRAVELER_HEADER.plantName} · ${lineName}` : TRAVELER_HEADER.plantName,
      this.left,
      this.y + 21,
    );
    this.text('semiBold', 12.5, title, this.left, this.y + 35);
    this.y += 52;
    this.rule(this.y, 2, INK);
    this.y += 10;
  }
  /** A table row: cells at the given column x offsets (from the left margin). */
  row(cells: string[], cols: number[], face: BarlowFace = 'regular', size = 8.5) {
    this.ensure(14);
    cells.forEach((c, i) => this.text(face, size, c, this.left + cols[i], this.y));
    this.y += size + 5;
  }
  paragraph(s: string, size = 9) {
    const width = this.right - this.left;
    this.doc.font('regular').fontSize(size);
    const h = this.doc.heightOfString(s, { width });
    this.ensure(h + 4);
    this.text('regular', size, s, this.left, this.y, width);
    this.y += h + 4;
  }
  ensure(h: number) {
    if (this.y + h <= this.doc.page.height - MARGIN) return;
    this.doc.addPage();
    this.y = MARGIN;
  }
}

async function render(
  title: string,
  draw: (s: Sheet) => void,
  at: Date,
  size: [number, number] = [...PAGE_SIZES_PT.A4],
): Promise<Buffer> {
  const doc = new PDFDocument({
    size,
    margin: MARGIN,
    autoFirstPage: true,
    font: '',
    lang: 'en',
    displayTitle: true,
    info: { Title: title, Creator: 'Phasewright', Producer: 'Phasewright', CreationDate: at, ModDate: at },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);
  draw(new Sheet(doc));
  doc.end();
  return done;
}

const signedDeg = (v: number, d = 3) => formatSignedDeg(v, d);
const when = (iso: string, timeZone: string) =>
  new Intl.DateTimeFormat('en-GB', { timeZone, dateStyle: 'medium', timeStyle: 'short' }).format(
    new Date(iso),
  ) + ` (${timeZone})`;

/** The small qualification slip of one reference reading (printed on demand; never a traveler). */
export function renderQualificationSlip(
  run: QualificationRunView,
  timeZone: string,
  now: Date,
): Promise<Buffer> {
  return render(
    `Qualification slip ${run.stationName} ${run.serial}`,
    (s) => {
      s.header('Station qualification slip');
      const mark = s.y + 14;
      if (run.verdict === 'pass') markGood(s.doc, s.left + 14, mark, 12);
      else if (run.verdict === 'fail') markBad(s.doc, s.left + 14, mark, 12);
      const word =
        run.verdict === 'pass' ? 'PASSED' : run.verdict === 'fail' ? 'FAILED' : 'RECORDED (certifying)';
      s.text('bold', 20, word, s.left + 36, s.y + 2);
      s.y += 36;
      s.heading('Reading');
      const cols = [0, 86];
      s.row(['Station', run.stationName], cols);
      s.row(['Reference unit', run.serial], cols);
      s.row(['Measured', when(run.measuredAt, timeZone)], cols);
      s.row(['Reading', `${run.offsetDeg.toFixed(3)}°`], cols);
      s.row(
        [
          'Certified value',
          run.certifiedOffsetDeg === null ? 'not certified yet' : `${run.certifiedOffsetDeg.toFixed(3)}°`,
        ],
        cols,
      );
      s.row(
        [
          'Deviation',
          run.deviationDeg === null
            ? '—'
            : `${signedDeg(run.deviationDeg)} (allowed ± ${run.toleranceDeg.toFixed(2)}°)`,
        ],
        cols,
      );
      s.paragraph(`Measurement id ${run.measurementId}`, 7);
      s.y += 6;
      s.paragraph(
        'A qualification reading proves the station, not the unit: the reference unit is not calibrated, counted as production or given a traveler by it.',
      );
    },
    now,
    // A slip, not a sheet: A6 (105 × 148 mm), like a label printer's ticket.
    [297.64, 419.53],
  );
}

function figureRows(s: Sheet, g: GaugeFigures) {
  const cols = [0, 190, 290, 390];
  s.row(['Source', 'Std deviation', '% of TV', '% of tolerance'], cols, 'semiBold');
  const pct = (v?: number) => (v === undefined ? '—' : `${v.toFixed(1)} %`);
  const rows: [string, number, number, number | undefined][] = [
    ['Repeatability (EV)', g.ev, g.percentOfTv.ev, g.percentOfTolerance?.ev],
    ['Reproducibility (AV)', g.av, g.percentOfTv.av, g.percentOfTolerance?.av],
    ['Interaction', g.interaction, g.percentOfTv.interaction, undefined],
    ['Gauge R&R (GRR)', g.grr, g.percentOfTv.grr, g.percentOfTolerance?.grr],
    ['Part variation (PV)', g.pv, g.percentOfTv.pv, g.percentOfTolerance?.pv],
    ['Total variation (TV)', g.tv, 100, undefined],
  ];
  for (const [n, sd, tv, tol] of rows)
    s.row([n, `${sd.toFixed(4)}°`, pct(tv), pct(tol)], cols, n.startsWith('Gauge') ? 'bold' : 'regular');
  s.row(['Number of distinct categories', Number.isFinite(g.ndc) ? String(g.ndc) : 'many'], cols);
}

/** The gauge study report: design, data table, ANOVA table and results by both methods. */
export function renderStudyReport(study: GaugeStudyDetail, timeZone: string, now: Date): Promise<Buffer> {
  return render(
    `Gauge R&R study ${study.name}`,
    (s) => {
      s.header('Gauge R&R study report');
      s.text('bold', 13, study.name, s.left, s.y);
      s.y += 20;
      s.heading('Design');
      const cols = [0, 170];
      s.row(['Model', study.modelCode], cols);
      s.row(
        [
          study.appraiserKind === 'station' ? 'Appraisers (stations)' : 'Appraisers (operators)',
          study.appraisers.map((a) => a.name).join(', '),
        ],
        cols,
      );
      s.row(['Parts', String(study.parts.length)], cols);
      s.paragraph(study.parts.join(', '), 8);
      s.row(['Trials', String(study.trials)], cols);
      s.row(['Tolerance (upper − lower limit)', `${study.toleranceDeg}°`], cols);
      s.row(['Planned', when(study.createdAt, timeZone)], cols);
      s.row(['Finished', study.finishedAt ? when(study.finishedAt, timeZone) : 'not yet'], cols);
      const r = study.results;
      if (!r) {
        s.paragraph(
          `The study is not complete: ${study.done} of ${study.total} readings taken. Results appear when every trial is in.`,
        );
        return;
      }
      s.heading('Reading');
      const good = r.reading.reading === 'acceptable';
      if (good) markGood(s.doc, s.left + 8, s.y + 7, 7);
      else markBad(s.doc, s.left + 8, s.y + 7, 7);
      s.doc.font('bold').fontSize(10);
      const w = s.right - s.left - 24;
      const h = s.doc.heightOfString(r.reading.sentence, { width: w });
      s.text('bold', 10, r.reading.sentence, s.left + 22, s.y, w);
      s.y += h + 6;
      s.paragraph(
        'Under 10 % acceptable, 10–30 % may be acceptable depending on the use, over 30 % not; at least 5 distinct categories (AIAG MSA manual, 4th edition, as commonly applied).',
        8,
      );
      s.heading('Data (offset, degrees)');
      const dcols = [
        0,
        60,
        ...study.appraisers.flatMap((_, a) =>
          Array.from({ length: study.trials }, (_t, t) => 120 + (a * study.trials + t) * 58),
        ),
      ];
      s.row(
        [
          'Part',
          'Serial',
          ...study.appraisers.flatMap((a) =>
            Array.from({ length: study.trials }, (_, t) => `${a.name.slice(0, 8)} ${t + 1}`),
          ),
        ],
        dcols,
        'semiBold',
        7.5,
      );
      r.data.forEach((part, p) =>
        s.row(
          [String(p + 1), study.parts[p], ...part.flatMap((cell) => cell.map((v) => v.toFixed(3)))],
          dcols,
          'regular',
          7.5,
        ),
      );
      s.heading('ANOVA table');
      const acols = [0, 150, 200, 280, 360, 420];
      s.row(['Source', 'df', 'SS (°²)', 'MS (°²)', 'F', 'p'], acols, 'semiBold');
      for (const row of r.anova.table) {
        s.row(
          [
            row.source === 'repeatability' && r.anova.interactionPooled
              ? 'repeatability (pooled)'
              : row.source,
            String(row.df),
            row.ss.toFixed(5),
            row.ms === undefined ? '' : row.ms.toFixed(5),
            row.f === undefined ? '' : row.f.toFixed(2),
            row.p === undefined ? '' : row.p < 0.0001 ? '< 0.0001' : row.p.toFixed(4),
          ],
          acols,
        );
      }
      s.paragraph(
        `Interaction p = ${r.anova.interactionP.toFixed(3)}: ${r.anova.interactionPooled ? 'pooled into repeatability (p > 0.25)' : 'kept'}.`,
        8,
      );
      s.heading('Results, ANOVA method');
      figureRows(s, r.anova);
      s.heading('Results, average-and-range method');
      figureRows(s, r.averageRange);
      s.paragraph(
        `K1 = ${r.averageRange.k1.toFixed(4)}, K2 = ${r.averageRange.k2.toFixed(4)}, K3 = ${r.averageRange.k3.toFixed(4)}.`,
        8,
      );
      const spoiled = study.readings.filter((x) => x.repeatReason);
      if (spoiled.length) {
        s.heading('Trials measured again');
        for (const x of spoiled)
          s.row([`${x.serial}, appraiser ${x.appraiser}, trial ${x.trial}`, x.repeatReason!], [0, 200]);
      }
    },
    now,
  );
}
