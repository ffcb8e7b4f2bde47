import PDFDocument from 'pdfkit';
import { ANALYSIS_FIGURES, type DistributionView } from '#shared/schemas/analysis';
import { normalPdf } from '#shared/statistics';
import { barlowFontSources } from '../travelers/fonts';

// Barlow has no Greek letters: the report writes "sigma" in full.
// The traveler's look: A4, black ink on white, Barlow TrueType, a heavy rule under the header.
const INK = '#000000';
const SOFT = '#4d4d4d';
const RULE = '#8c8c8c';
const TINT = '#d9d9d9';
const MARGIN = 36;

export interface CapabilityReportInput {
  view: DistributionView;
  companyName: string;
  plantName: string;
  model: { code: string; name: string };
  /** The filter in words, one line. */
  filterText: string;
  generatedAt: Date;
  generatedBy: string;
}

const num = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(digits);

const READING = {
  capable: 'Capable: Cpk is 1.67 or more.',
  'conditionally-capable': 'Acceptable with watching: Cpk between 1.33 and 1.67.',
  'not-capable': 'Not capable: Cpk below 1.33.',
} as const;

/** A one-page capability report for a figure and filter: what a customer asks for as capability evidence. */
export async function renderCapabilityReport(input: CapabilityReportInput): Promise<Buffer> {
  const { view } = input;
  const figure = ANALYSIS_FIGURES[view.figure];
  const unit = figure.unit === '°' ? '° (electrical)' : figure.unit;
  const doc = new PDFDocument({
    size: 'A4',
    margin: MARGIN,
    font: '',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: `Process capability report ${input.model.code}: ${figure.label}`,
      Author: `${input.companyName}, ${input.plantName}`,
      Creator: 'Phasewright',
      CreationDate: input.generatedAt,
    },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);
  const left = MARGIN;
  const right = doc.page.width - MARGIN;
  const width = right - left;
  const text = (
    face: string,
    size: number,
    s: string,
    x: number,
    y: number,
    opts: PDFKit.Mixins.TextOptions = {},
  ) =>
    doc
      .font(face)
      .fontSize(size)
      .fillColor(opts.fill === undefined ? INK : SOFT)
      .text(s, x, y, { lineBreak: false, ...opts });

  // Header
  let y = MARGIN;
  text('bold', 17, input.companyName, left, y);
  text('regular', 9.5, input.plantName, left, y + 21);
  text('semiBold', 12.5, 'Process capability report', left, y + 35);
  text('semiBold', 10, `${input.model.code} · ${input.model.name}`, left, y + 2, { width, align: 'right' });
  text('regular', 9, `${figure.label}, ${unit}`, left, y + 17, { width, align: 'right' });
  text('regular', 9, `${view.n} units`, left, y + 30, { width, align: 'right' });
  y += 54;
  doc.moveTo(left, y).lineTo(right, y).lineWidth(2).strokeColor(INK).stroke();
  y += 8;
  doc.font('regular').fontSize(8.5).fillColor(SOFT).text(`Filter: ${input.filterText}`, left, y, { width });
  y = doc.y + 8;

  // Histogram with limits, target and the fitted normal curve.
  const bins = view.histogram;
  const chartH = 190;
  const chartTop = y;
  const d = view.description;
  if (bins.length) {
    const { lsl, usl, target } = view.limits;
    const lo = Math.min(bins[0].from, lsl ?? Infinity);
    const hi = Math.max(bins[bins.length - 1].to, usl ?? -Infinity);
    const span = hi - lo || 1;
    const x0 = lo - span * 0.04;
    const x1 = hi + span * 0.04;
    const bw = bins[0].to - bins[0].from;
    const curve: [number, number][] = [];
    if (d.mean !== null && d.sd)
      for (let i = 0; i <= 100; i++) {
        const x = x0 + ((x1 - x0) * i) / 100;
        curve.push([x, view.n * bw * normalPdf(x, d.mean, d.sd)]);
      }
    const yMax = Math.max(...bins.map((b) => b.count), ...curve.map((c) => c[1])) * 1.1 || 1;
    const sx = (x: number) => left + 30 + ((x - x0) / (x1 - x0)) * (width - 30);
    const sy = (v: number) => chartTop + chartH - 16 - (v / yMax) * (chartH - 30);
    for (const b of bins) {
      doc
        .rect(
          sx(b.from) + 0.3,
          sy(b.count),
          Math.max(0, sx(b.to) - sx(b.from) - 0.6),
          chartTop + chartH - 16 - sy(b.count),
        )
        .fill(TINT);
    }
    if (curve.length) {
      doc.moveTo(sx(curve[0][0]), sy(curve[0][1]));
      for (const [x, v] of curve.slice(1)) doc.lineTo(sx(x), sy(v));
      doc.lineWidth(1.2).strokeColor(INK).stroke();
    }
    const mark = (x: number | null, label: string, dash: boolean) => {
      if (x === null) return;
      doc
        .moveTo(sx(x), chartTop + 4)
        .lineTo(sx(x), chartTop + chartH - 16)
        .lineWidth(1)
        .strokeColor(INK);
      if (dash) doc.dash(3, { space: 2 });
      doc.stroke().undash();
      text('regular', 7.5, `${label} ${num(x, 2)}`, sx(x) + 2, chartTop + 4);
    };
    mark(lsl, 'LSL', true);
    mark(usl, 'USL', true);
    mark(target, 'Target', false);
    doc
      .moveTo(left + 30, chartTop + chartH - 16)
      .lineTo(right, chartTop + chartH - 16)
      .lineWidth(0.5)
      .strokeColor(RULE)
      .stroke();
    for (let i = 0; i <= 5; i++) {
      const x = x0 + ((x1 - x0) * i) / 5;
      text('regular', 7.5, num(x, 1), sx(x) - 15, chartTop + chartH - 12, { width: 30, align: 'center' });
    }
  }
  y = chartTop + chartH + 8;

  // Two tables side by side: the distribution, and capability with 95 % intervals.
  const colW = (width - 16) / 2;
  const row = (x: number, yy: number, k: string, v: string, v2 = '') => {
    text('regular', 9, k, x, yy);
    text('semiBold', 9, v, x + colW * 0.5, yy);
    if (v2) text('regular', 9, v2, x + colW * 0.7, yy);
    doc
      .moveTo(x, yy + 13)
      .lineTo(x + colW, yy + 13)
      .lineWidth(0.4)
      .strokeColor(RULE)
      .stroke();
  };
  text('semiBold', 10.5, 'Distribution', left, y);
  const c = view.capability;
  text('semiBold', 10.5, 'Capability (95 % confidence interval)', left + colW + 16, y);
  y += 16;
  const dist: [string, string][] = [
    ['Units (n)', String(view.n)],
    ['Mean', num(d.mean)],
    ['Standard deviation', num(d.sd)],
    ['Median', num(d.median)],
    ['Lowest / highest', `${num(d.min, 2)} / ${num(d.max, 2)}`],
    ['Skewness', num(d.skewness)],
    ['Anderson–Darling A²', view.normality ? num(view.normality.statistic) : '—'],
    [
      'Normality p-value',
      view.normality
        ? view.normality.pValue < 0.0001
          ? 'below 0.0001'
          : num(view.normality.pValue, 4)
        : '—',
    ],
    ['Limits (LSL / USL)', `${num(view.limits.lsl, 2)} / ${num(view.limits.usl, 2)}`],
  ];
  dist.forEach(([k, v], i) => row(left, y + i * 16, k, v));
  const ci = (i: { value: number; lower: number; upper: number } | null) =>
    i ? [num(i.value, 2), `${num(i.lower, 2)} – ${num(i.upper, 2)}`] : ['—', ''];
  const cap: [string, string, string][] = c
    ? [
        ['Cp (within)', ...ci(c.cp)] as [string, string, string],
        ['Cpk (within)', ...ci(c.cpk)] as [string, string, string],
        ['Pp (overall)', ...ci(c.pp)] as [string, string, string],
        ['Ppk (overall)', ...ci(c.ppk)] as [string, string, string],
        ['Sigma within (moving range / d2)', num(c.sigmaWithin), ''],
        ['Sigma overall', num(c.sigmaOverall), ''],
        ['Expected outside, sigma within', `${num(c.ppmWithin, 1)} ppm`, ''],
        ['Expected outside, sigma overall', `${num(c.ppmOverall, 1)} ppm`, ''],
      ]
    : [['No limits for this figure', '—', '']];
  cap.forEach(([k, v, v2], i) => row(left + colW + 16, y + i * 16, k, v, v2));
  y += Math.max(dist.length, cap.length) * 16 + 10;

  // Reading and cautions.
  doc.font('semiBold').fontSize(10).fillColor(INK);
  doc.text(
    c?.reading
      ? `Reading: ${READING[c.reading]} Bands for initial studies 1.33 / 1.67 (common practice in the automotive supply chain).`
      : 'Reading: no capability indices (the recipe sets no limits for this figure).',
    left,
    y,
    { width },
  );
  y = doc.y + 6;
  doc.font('regular').fontSize(8.5).fillColor(SOFT);
  for (const w of view.warnings) {
    doc.text(`• ${w}`, left, y, { width });
    y = doc.y + 3;
  }
  doc.text(
    'Cp and Cpk use the short-term sigma (average moving range of consecutive units / d2); Pp and Ppk the overall sample standard deviation. Intervals: chi-square for Cp and Pp, Bissell (1990) for Cpk and Ppk. Expected parts per million assume a normal distribution.',
    left,
    y + 4,
    { width },
  );

  // Footer.
  const fy = doc.page.height - MARGIN - 12;
  doc
    .moveTo(left, fy - 4)
    .lineTo(right, fy - 4)
    .lineWidth(0.5)
    .strokeColor(RULE)
    .stroke();
  text(
    'regular',
    8,
    `Generated ${input.generatedAt.toISOString().replace('T', ' ').slice(0, 16)} UTC by ${input.generatedBy} · Phasewright`,
    left,
    fy,
  );
  doc.end();
  return done;
}
