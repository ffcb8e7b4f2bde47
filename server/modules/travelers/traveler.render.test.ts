import {
  BarcodeFormat,
  BinaryBitmap,
  DecodeHintType,
  HybridBinarizer,
  MultiFormatReader,
  RGBLuminanceSource,
} from '@zxing/library';
import { PDFParse } from 'pdf-parse';
import { PNG } from 'pngjs';
import { beforeAll, describe, expect, it } from 'vitest';
import { formatTravelerCode, parseTravelerCode, renderTravelerPdf, SAFETY_CAUTIONS } from './traveler.render';
import { checkName, formatCheckLimit } from '#shared/calibration/check-guide';
import { calibrate } from '#shared/calibration/engine';
import { createRng, exampleRecipe, simulateMeasurement } from '#shared/simulation';
import type { SimulationSpec } from '#shared/simulation/simulate';
import type { TravelerDataInput } from './traveler.types';
import { TravelerDataError, parseTravelerData } from './traveler.types';

// Each test builds its unit from this invented demo scenario and changes what it is about.
function unit(overrides: Partial<TravelerDataInput> = {}): TravelerDataInput {
  return {
    companyName: 'Corvane Motion Ltd',
    plantName: 'Hollin Ridge Works',
    lineName: 'Line 2',
    serial: 'CM57-24-008143',
    model: { name: 'BL57-4 Servo 400 W', polePairs: 4 },
    lots: { hallBoard: 'HB-2411-07', magnetRing: 'MR-2410-22', stator: 'ST-2411-03' },
    verdict: 'pass',
    offsetDeg: 3.42,
    // 3.42 / 360 × 65536 = 622.6 → 623
    offsetCounts: 623,
    countsPerTurn: 65536,
    lagDeg: 0.41,
    edges: [
      { sensor: 'A', edge: 'rise', residualDeg: 0.38 },
      { sensor: 'A', edge: 'fall', residualDeg: -0.21 },
      { sensor: 'B', edge: 'rise', residualDeg: -0.55 },
      { sensor: 'B', edge: 'fall', residualDeg: 0.12 },
      { sensor: 'C', edge: 'rise', residualDeg: 0.29 },
      { sensor: 'C', edge: 'fall', residualDeg: -0.03 },
    ],
    speedRpm: 1480,
    electricalTurns: 48,
    checks: [
      {
        code: 'offset.within_limits',
        passed: true,
        value: 3.42,
        limit: [-15, 15],
        unit: '°e',
        sentence: 'The hall offset lies inside the window the recipe allows.',
      },
      {
        code: 'edges.residual_spread',
        passed: true,
        value: 0.93,
        limit: 2,
        unit: '°e',
        sentence: 'Every hall edge sits within the allowed distance of the common offset.',
      },
      {
        code: 'speed.window',
        passed: true,
        value: 1480,
        limit: [1200, 1800],
        unit: 'rpm',
        sentence: 'The rotor speed stayed within the measuring window.',
      },
    ],
    stationName: 'EOL-2A Hall calibration',
    operatorName: 'Priya Okafor',
    measuredAt: '2026-12-02T14:03:11.204Z',
    computedAt: '2026-12-02T14:03:11.402Z',
    generatedAt: '2026-12-02T14:03:12.000Z',
    recipe: { name: 'BL57-4 hall 120', version: 3 },
    engineVersion: 'engine 1.0.0',
    programming: {
      status: 'confirmed',
      writtenCounts: 623,
      readBackCounts: 623,
      checksum: '0x5A3C',
      confirmedAt: '2026-12-02T14:03:14.950Z',
    },
    printNumber: 1,
    pageSize: 'A4',
    ...overrides,
  };
}

// A thermal label printer's resolution: 203 dots per inch (8 dots per mm).
const PRINTER_DPI = 203;

async function readBack(pdf: Buffer, opts: { raster?: boolean } = {}) {
  const parser = new PDFParse({ data: new Uint8Array(pdf) });
  try {
    const text = await parser.getText();
    const info = await parser.getInfo({ parsePageInfo: true });
    // The barcodes are vector paths: rasterise each page as a 203 dpi printer would (pdf.js), then decode.
    const shots = opts.raster
      ? await parser.getScreenshot({ scale: PRINTER_DPI / 72, imageDataUrl: false, imageBuffer: true })
      : { pages: [] };
    return { text: text.text, info, pages: shots.pages.map((p) => PNG.sync.read(Buffer.from(p.data))) };
  } finally {
    await parser.destroy();
  }
}

type Raster = { width: number; height: number; data: Buffer };

// Decodes a region of a rasterised page with the general-purpose zxing decoder, restricted to one symbology.
function decodeRegion(
  png: Raster,
  format: BarcodeFormat,
  region: { x: number; y: number; w: number; h: number },
): string | null {
  const x0 = Math.max(0, Math.round(region.x));
  const y0 = Math.max(0, Math.round(region.y));
  const w = Math.min(png.width - x0, Math.round(region.w));
  const h = Math.min(png.height - y0, Math.round(region.h));
  const luminance = new Uint8ClampedArray(w * h);
  for (let y = 0; y < h; y += 1) {
    for (let x = 0; x < w; x += 1) {
      const i = 4 * ((y0 + y) * png.width + x0 + x);
      const [r, g, b] = [png.data[i], png.data[i + 1], png.data[i + 2]];
      luminance[y * w + x] = (r * 299 + g * 587 + b * 114) / 1000;
    }
  }
  const reader = new MultiFormatReader();
  const hints = new Map<DecodeHintType, unknown>([
    [DecodeHintType.POSSIBLE_FORMATS, [format]],
    [DecodeHintType.TRY_HARDER, true],
  ]);
  try {
    const bitmap = new BinaryBitmap(new HybridBinarizer(new RGBLuminanceSource(luminance, w, h)));
    return reader.decode(bitmap, hints).getText();
  } catch {
    return null;
  }
}

// The barcodes sit in the identity band at the top of the first page: Code 128 on the left under the
// serial, the Data Matrix at the right margin. Each is looked for in its part of the band, as a scanner
// aimed at it would see it; texts found more than once are reported once.
function decodeAny(pages: Raster[], format: BarcodeFormat): string[] {
  const found = new Set<string>();
  for (const png of pages.slice(0, 1)) {
    const regions =
      format === BarcodeFormat.DATA_MATRIX
        ? [0.7, 0.74, 0.78].flatMap((x) =>
            [0.08, 0.12, 0.16, 0.2].map((y) => ({
              x: png.width * x,
              y: png.height * y,
              w: png.width * 0.26,
              h: png.width * 0.22,
            })),
          )
        : [0.04, 0.1, 0.16, 0.22].map((y) => ({
            x: 0,
            y: png.height * y,
            w: png.width * 0.5,
            h: png.height * 0.08,
          }));
    for (const region of regions) {
      const text = decodeRegion(png, format, region);
      if (text !== null) found.add(text);
    }
  }
  return [...found];
}

describe('unit traveler PDF', () => {
  let passing: Awaited<ReturnType<typeof readBack>>;

  beforeAll(async () => {
    passing = await readBack(await renderTravelerPdf(unit()), { raster: true });
  });

  it('prints the serial, verdict, offset in degrees and counts, and the demo plant', () => {
    expect(passing.text).toContain('CM57-24-008143');
    expect(passing.text).toContain('PASS');
    expect(passing.text).toContain('+3.42 °e');
    expect(passing.text).toContain('+623');
    expect(passing.text).toContain('65536');
    expect(passing.text).toContain('Corvane Motion Ltd');
    expect(passing.text).toContain('Hollin Ridge Works');
    expect(passing.text).toContain('HB-2411-07');
    expect(passing.text).toContain('ORIGINAL');
    expect(passing.text).not.toContain('REPRINT');
  });

  it('carries the back-driven motor cautions, naming IEC 60204-1', () => {
    const flat = passing.text.replace(/\s+/g, ' ');
    for (const caution of SAFETY_CAUTIONS) expect(flat).toContain(caution);
    expect(flat).toContain('IEC 60204-1');
    expect(flat).toMatch(/guards/i);
    expect(flat).toMatch(/back-EMF/);
  });

  it('prints times in UTC unless told otherwise, and in the zone it names when told', async () => {
    expect(passing.text).toContain('2026-12-02 14:03:11 UTC');
    // Europe/London is on GMT (UTC+0) in December and on BST (UTC+1) in July: IANA tz database.
    const summer = await readBack(
      await renderTravelerPdf(
        unit({
          timeZone: 'Europe/London',
          measuredAt: '2026-07-02T14:03:11Z',
          computedAt: '2026-07-02T14:03:12Z',
        }),
      ),
    );
    expect(summer.text).toContain('2026-07-02 15:03:11 UTC+01:00');
    expect(summer.text).toContain('Europe/London');
  });

  it('encodes the serial in a Code 128 symbol that a general-purpose decoder reads back', () => {
    // Code 128 per ISO/IEC 15417, decoded by @zxing/library from the image embedded in the PDF.
    expect(decodeAny(passing.pages, BarcodeFormat.CODE_128)).toContain('CM57-24-008143');
  });

  it('encodes serial, offset and recipe version in a Data Matrix that a general-purpose decoder reads back', () => {
    // Data Matrix (ECC 200) per ISO/IEC 16022, decoded by @zxing/library from the embedded image.
    const texts = decodeAny(passing.pages, BarcodeFormat.DATA_MATRIX);
    expect(texts).toHaveLength(1);
    const code = parseTravelerCode(texts[0]);
    expect(code.serial).toBe('CM57-24-008143');
    expect(code.offsetDeg).toBe(3.42);
    expect(code.offsetCounts).toBe(623);
    expect(code.countsPerTurn).toBe(65536);
    expect(code.recipeVersion).toBe(3);
    expect(code.verdict).toBe('pass');
  });

  it('marks a reprint with its print number and keeps both barcodes readable', async () => {
    const reprint = await readBack(await renderTravelerPdf(unit({ printNumber: 3 })), { raster: true });
    expect(reprint.text).toContain('REPRINT 3');
    expect(reprint.text).not.toContain('ORIGINAL');
    expect(decodeAny(reprint.pages, BarcodeFormat.CODE_128)).toContain('CM57-24-008143');
    expect(decodeAny(reprint.pages, BarcodeFormat.DATA_MATRIX)).toHaveLength(1);
  });

  it('prints on A4 and on US Letter at their standard sizes', async () => {
    // A4 is 210 × 297 mm (ISO 216) = 595.28 × 841.89 pt; Letter is 8.5 × 11 in (ANSI/ASME Y14.1) = 612 × 792 pt.
    const a4 = passing.info.pages[0];
    expect(a4.width).toBeCloseTo(595.28, 1);
    expect(a4.height).toBeCloseTo(841.89, 1);
    const letter = await readBack(await renderTravelerPdf(unit({ pageSize: 'LETTER' })), { raster: true });
    expect(letter.info.total).toBe(1);
    expect(letter.info.pages[0].width).toBeCloseTo(612, 1);
    expect(letter.info.pages[0].height).toBeCloseTo(792, 1);
    expect(letter.text).toContain('Page 1 of 1');
    expect(decodeAny(letter.pages, BarcodeFormat.CODE_128)).toContain('CM57-24-008143');
  });

  it('shows a failed unit as FAIL and REJECT with each failed check named and explained', async () => {
    const failing = unit({
      verdict: 'fail',
      offsetDeg: -17.85,
      // −17.85 / 360 × 65536 = −3249.49 → −3249 counts (arithmetic)
      offsetCounts: -3249,
      programming: { status: 'pending' },
    });
    failing.checks = [
      {
        code: 'offset.within_limits',
        passed: false,
        value: -17.85,
        limit: [-15, 15],
        unit: '°e',
        sentence: 'The hall offset lies outside the window the recipe allows.',
      },
      ...failing.checks.slice(1),
    ];
    const { text: raw, pages } = await readBack(await renderTravelerPdf(failing), { raster: true });
    const text = raw.replace(/\s+/g, ' ');
    expect(text).toContain('FAIL');
    expect(text).toContain('1 of 3 checks failed');
    expect(text).toContain('offset.within_limits');
    expect(text).toContain('The hall offset lies outside the window the recipe allows.');
    expect(text).toContain('\u221217.85 °e');
    expect(text).toContain('REJECT: DO NOT SHIP');
    expect(text).toContain('DO NOT PROGRAM');
    expect(text).not.toContain('PENDING');
    expect(parseTravelerCode(decodeAny(pages, BarcodeFormat.DATA_MATRIX)[0]).verdict).toBe('fail');
  });

  it('flags a programming mismatch with both values, so the unit is not shipped', async () => {
    const { text } = await readBack(
      await renderTravelerPdf(
        unit({
          programming: {
            status: 'mismatch',
            writtenCounts: 623,
            readBackCounts: 591,
            confirmedAt: '2026-12-02T14:03:14.950Z',
          },
        }),
      ),
    );
    expect(text).toContain('MISMATCH');
    expect(text).toMatch(/READ BACK \(COUNTS\)\s+591/);
    expect(text).toContain('do not ship this unit');
  });

  it('gives the same bytes for the same data, so a stored sha256 can be reproduced', async () => {
    const [a, b] = [await renderTravelerPdf(unit()), await renderTravelerPdf(unit())];
    expect(a.equals(b)).toBe(true);
    const later = await renderTravelerPdf(unit({ generatedAt: '2026-12-02T15:00:00Z' }));
    expect(later.equals(a)).toBe(false);
  });

  it('continues onto a second page when the checks do not fit, numbering the pages', async () => {
    const many = unit();
    many.checks = Array.from({ length: 24 }, (_, i) => ({
      code: `extra.check_${i + 1}`,
      passed: i % 5 !== 0,
      value: i,
      limit: 30,
      sentence:
        'A check with a sentence long enough to wrap onto a second line inside its table cell, as some do.',
    }));
    many.verdict = 'fail';
    const { text, info } = await readBack(await renderTravelerPdf(many));
    expect(info.total).toBe(2);
    expect(text).toContain('Page 2 of 2');
    expect(text).toContain('extra.check_24');
  });

  it('rejects bad input with an error that names each bad field, before drawing anything', async () => {
    const bad = unit({ serial: 'CM57|24', offsetDeg: Number.NaN });
    bad.edges = bad.edges.slice(0, 5);
    await expect(renderTravelerPdf(bad)).rejects.toThrow(TravelerDataError);
    await expect(renderTravelerPdf(bad)).rejects.toThrow(/serial: The serial contains “\|”/);
    await expect(renderTravelerPdf(bad)).rejects.toThrow(/offsetDeg/);
    await expect(renderTravelerPdf(bad)).rejects.toThrow(/edges/);
  });

  it('rejects an offset in counts that does not match the offset in degrees', () => {
    expect(() => parseTravelerData(unit({ offsetCounts: 1623 }))).toThrow(/offsetCounts 1623 does not match/);
    expect(() => parseTravelerData(unit({ timeZone: 'Mars/Olympus' }))).toThrow(/unknown time zone/);
  });

  it('writes and reads back its own Data Matrix text format', () => {
    const text = formatTravelerCode(parseTravelerData(unit({ offsetDeg: -0.004, offsetCounts: -1 })));
    expect(text).toBe('PW1|SN=CM57-24-008143|OFS=0.00|CNT=-1/65536|RCP=BL57-4 hall 120@3|V=P');
    expect(parseTravelerCode(text).offsetCounts).toBe(-1);
    expect(() => parseTravelerCode('XX9|SN=1')).toThrow(/not a PW1 traveler code/);
  });
});

// Travelers of units measured by the engine on simulated motors (the independent simulator in shared/),
// mapped the way the traveler service maps a stored calibration.
function engineUnit(extra: Partial<SimulationSpec>, overrides: Partial<TravelerDataInput> = {}) {
  const recipe = exampleRecipe();
  const { measurement } = simulateMeasurement(
    {
      polePairs: recipe.polePairs,
      hallRiseDeg: recipe.hallRiseDeg,
      offsetDeg: 4.21,
      jitterUs: 0.5,
      bemfDelayUs: recipe.bemfDelayUs,
      channels: ['A', 'B', 'C'],
      segments: [
        {
          direction: 'forward',
          profile: { kind: 'coast', startRpm: 3000, endRpm: 2300 },
          electricalTurns: 40,
        },
        {
          direction: 'reverse',
          profile: { kind: 'coast', startRpm: 2900, endRpm: 2200 },
          electricalTurns: 40,
        },
      ],
      ...extra,
    },
    createRng(11),
  );
  const result = calibrate(measurement, recipe);
  const offsetDeg = result.offsetDeg ?? 0;
  return unit({
    verdict: result.verdict,
    offsetDeg,
    offsetCounts: Math.round((offsetDeg / 360) * 65536),
    lagDeg: result.lagDeg ?? undefined,
    edges: result.edges.map((e) => ({ sensor: e.sensor, edge: e.edge, residualDeg: e.residualDeg ?? 0 })),
    speedRpm: result.speedRpm,
    electricalTurns: result.electricalTurns,
    recipe: { name: 'BL57-4 hall 120 coast-down both directions', version: 12 },
    checks: result.checks.map((c) => ({
      code: c.code,
      passed: c.passed,
      value: c.value,
      limit: c.limit,
      unit: c.unit || undefined,
      sentence: c.message,
    })),
    programming: result.verdict === 'pass' ? unit().programming : { status: 'pending' },
    ...overrides,
  });
}

const flat = (text: string) => text.replace(/\s+/g, ' ');

describe('traveler as an auditor reads it', () => {
  it('prints every check row with its plain name and its limit in its true direction', async () => {
    const data = engineUnit({});
    expect(data.verdict).toBe('pass');
    const text = flat((await readBack(await renderTravelerPdf(data))).text);
    for (const check of data.checks) {
      const name = checkName(check.code);
      const limit = formatCheckLimit(check);
      expect(text, check.code).toContain(name);
      // The row reads name, code, measured value, then the limit with its direction sign (a list of
      // states may wrap inside its cell, so only its first entry is looked for next to the name).
      const row = text.slice(text.indexOf(name), text.indexOf(name) + 200);
      expect(row, check.code).toContain(typeof check.limit === 'string' ? limit.split(' ')[0] : limit);
    }
    // Minimums read ≥ (a passing unit's 100 % of edges and 40 turns must not look over a maximum).
    expect(text).toMatch(/Every hall sensor switches hall\.all_switching \d+ % ≥ 50 %/);
    expect(text).toMatch(/Enough electrical turns turns\.enough [\d.]+ turns ≥ 20 turns/);
    expect(text).not.toMatch(/≤ 50 %|≤ 20 turns/);
  });

  it("prints the speed check's value as the header speed", async () => {
    const data = engineUnit({});
    const speedCheck = data.checks.find((c) => c.code === 'speed.within_window')!;
    const text = flat((await readBack(await renderTravelerPdf(data))).text);
    const shown = String(Number((speedCheck.value as number).toFixed(2)));
    expect(text).toMatch(new RegExp(`SPEED ${shown} rpm`));
  });

  it('prints the whole recipe name, never cut', async () => {
    const text = flat((await readBack(await renderTravelerPdf(engineUnit({})))).text);
    expect(text).toContain('BL57-4 hall 120 coast-down both directions v12');
    expect(text).not.toContain('…');
  });

  it('says REJECT on a failed unit and never that it waits for programming', async () => {
    const data = engineUnit({ deadSensor: 'B' });
    expect(data.verdict).toBe('fail');
    const text = flat((await readBack(await renderTravelerPdf(data))).text);
    expect(text).toContain('REJECT: DO NOT SHIP');
    expect(text).toContain('DO NOT PROGRAM: the unit failed calibration');
    expect(text).not.toMatch(/PENDING|has not yet confirmed/);
  });

  it('says ON HOLD with the reason on a held unit', async () => {
    const data = engineUnit(
      { offsetDeg: 19 },
      { hold: { reason: '3 calibration attempts without a pass (recipe v12 allows 3)' } },
    );
    const text = flat((await readBack(await renderTravelerPdf(data))).text);
    expect(text).toContain('ON HOLD: DO NOT SHIP');
    expect(text).toContain('3 calibration attempts without a pass (recipe v12 allows 3)');
    expect(text).toContain('DO NOT PROGRAM: the unit is on hold');
  });

  it.each([
    ['A4', 'pass'],
    ['A4', 'fail'],
    ['A4', 'hold'],
    ['LETTER', 'pass'],
    ['LETTER', 'fail'],
    ['LETTER', 'hold'],
  ] as const)(
    'fits one %s page for a %s traveler, safety box and release fields included',
    async (size, kind) => {
      const data =
        kind === 'pass'
          ? engineUnit({}, { pageSize: size })
          : kind === 'fail'
            ? engineUnit({ deadSensor: 'C', miswiredBC: true }, { pageSize: size })
            : engineUnit(
                { offsetDeg: 26 },
                {
                  pageSize: size,
                  hold: { reason: 'Sent to repair (a retest cannot help): offset far outside' },
                },
              );
      const { info, text } = await readBack(await renderTravelerPdf(data));
      expect(info.total).toBe(1);
      const all = flat(text);
      expect(all).toContain('Page 1 of 1');
      expect(all).toContain('RELEASED BY (NAME)');
      for (const caution of SAFETY_CAUTIONS) expect(all).toContain(caution);
    },
  );
});
