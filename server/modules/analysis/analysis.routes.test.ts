import Papa from 'papaparse';
import { PDFParse } from 'pdf-parse';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../demo/demo-line.seed';
import { DRIFTING_STATION, OFF_HALL_BOARD_LOT } from '../demo/demo-line.scenario';
import type {
  AnalysisOptions,
  ComparisonView,
  ControlChartView,
  DistributionView,
  LineHealthView,
} from '#shared/schemas/analysis';

// A Thursday: the seeded fortnight runs from 5 to 19 November 2026.
const NOW = new Date('2026-11-19T09:30:00Z');

let t: TestApp;
let engineer: string;
let modelId: string;
let options: AnalysisOptions;

beforeAll(async () => {
  t = await createTestApp();
  await seedDemoLine(t.deps, { units: 600, now: NOW });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  const models = await request(t.app).get('/api/models').set('Cookie', engineer);
  modelId = models.body.models.find((m: { code: string }) => m.code === 'CV-57B').id;
  options = (
    await request(t.app).get('/api/analysis/options').query({ model: modelId }).set('Cookie', engineer)
  ).body;
}, 120_000);

afterAll(async () => {
  await t?.close();
});

const get = (path: string, query: Record<string, string | number>) =>
  request(t.app).get(path).query(query).set('Cookie', engineer);

describe('the filter bar', () => {
  it('offers the stations, lots and recipe versions that hold calibrations of the model', () => {
    expect(options.stations.map((s) => s.name)).toEqual(['EOL-21', 'EOL-23']);
    expect(options.hallBoardLots).toContain(OFF_HALL_BOARD_LOT);
    expect(options.recipeVersions).toEqual([1]);
  });

  it('refuses a request without a model, saying so in plain words', async () => {
    const res = await get('/api/analysis/distribution', {});
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toMatch(/Choose a model/);
  });

  it('refuses a time range that ends before it starts', async () => {
    const res = await get('/api/analysis/distribution', {
      model: modelId,
      from: '2026-11-10T00:00:00Z',
      to: '2026-11-09T00:00:00Z',
    });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toMatch(/must come before its end/);
  });
});

describe('distribution and capability', () => {
  it('describes the offsets of the model with the recipe limits, a normality test and capability', async () => {
    const res = await get('/api/analysis/distribution', { model: modelId, verdict: 'pass' });
    expect(res.status).toBe(200);
    const d = res.body as DistributionView;
    expect(d.n).toBeGreaterThan(150);
    expect(d.limits).toEqual({ lsl: -10, usl: 10, target: 0 });
    expect(d.histogram.reduce((a, b) => a + b.count, 0)).toBe(d.n);
    expect(d.normality).not.toBeNull();
    const c = d.capability!;
    expect(c.cpk!.lower).toBeLessThan(c.cpk!.value);
    expect(c.cpk!.upper).toBeGreaterThan(c.cpk!.value);
    expect(c.pp!.value).toBeCloseTo(20 / (6 * d.description.sd!), 8);
  });

  it('narrows to one station and one lot, and to first attempts only', async () => {
    const station = options.stations.find((s) => s.name === 'EOL-21')!.id;
    const all = (await get('/api/analysis/distribution', { model: modelId })).body as DistributionView;
    const narrow = (
      await get('/api/analysis/distribution', {
        model: modelId,
        stations: station,
        hallBoardLots: OFF_HALL_BOARD_LOT,
        attempts: 'first',
      })
    ).body as DistributionView;
    expect(narrow.n).toBeGreaterThan(0);
    expect(narrow.n).toBeLessThan(all.n);
  });
});

describe('comparisons', () => {
  it('singles out hall-board lot HB-2446-C, about 4° off, first and by far the most over all stations', async () => {
    for (const code of ['CV-57B', 'CV-86S']) {
      const models = await request(t.app).get('/api/models').set('Cookie', engineer);
      const model = models.body.models.find((m: { code: string }) => m.code === code).id;
      const res = await get('/api/analysis/comparison', { model, by: 'hallBoardLot', verdict: 'pass' });
      expect(res.status).toBe(200);
      const v = res.body as ComparisonView;
      expect(v.standOut[0].label).toBe(OFF_HALL_BOARD_LOT);
      expect(v.standOut[0].differenceFromRest).toBeGreaterThan(2.5);
      // Lots used late in the fortnight can sit near the threshold: they were partly measured on the
      // drifting station. Nothing else comes close to the bad lot.
      for (const other of v.standOut.slice(1)) expect(Math.abs(other.differenceFromRest)).toBeLessThan(1.5);
      expect(v.test!.pValue).toBeLessThan(0.001);
    }
  });

  it('singles out HB-2446-C and no other lot on each model’s steady station', async () => {
    const models = (await request(t.app).get('/api/models').set('Cookie', engineer)).body.models;
    for (const [code, stationName] of [
      ['CV-57B', 'EOL-21'],
      ['CV-86S', 'EOL-22'],
    ]) {
      const model = models.find((m: { code: string }) => m.code === code).id;
      const opts = (await get('/api/analysis/options', { model })).body as AnalysisOptions;
      const station = opts.stations.find((s) => s.name === stationName)!.id;
      const v = (
        await get('/api/analysis/comparison', {
          model,
          by: 'hallBoardLot',
          stations: station,
          verdict: 'pass',
        })
      ).body as ComparisonView;
      expect(v.standOut.map((g) => g.label)).toEqual([OFF_HALL_BOARD_LOT]);
    }
  });

  it('finds no lot beyond a practical threshold larger than the bad lot’s shift', async () => {
    const v = (await get('/api/analysis/comparison', { model: modelId, by: 'hallBoardLot', threshold: 8 }))
      .body as ComparisonView;
    expect(v.standOut).toEqual([]);
    expect(v.groups.length).toBeGreaterThanOrEqual(4);
  });
});

describe('control charts', () => {
  it('flags the drifting station against limits frozen from its first days', async () => {
    const station = options.stations.find((s) => s.name === DRIFTING_STATION)!.id;
    const res = await get('/api/analysis/control-chart', {
      model: modelId,
      stations: station,
      chart: 'ewma',
      verdict: 'pass',
      hallBoardLots: options.hallBoardLots.filter((l) => l !== OFF_HALL_BOARD_LOT).join(','),
      baselineFrom: '2026-11-05T00:00:00Z',
      baselineTo: '2026-11-09T00:00:00Z',
    });
    expect(res.status).toBe(200);
    const c = res.body as ControlChartView;
    expect(c.baseline.source).toBe('window');
    const late = c.violations.filter((v) => v.at.computedAt >= '2026-11-14');
    expect(late.length).toBeGreaterThan(0);
    // The drift is downwards: late signals sit below the centre.
    expect(late.every((v) => v.at.value < c.baseline.center)).toBe(true);
  });

  it('marks every violating point of an I-MR chart with its rule and names the units involved', async () => {
    const res = await get('/api/analysis/control-chart', { model: modelId, chart: 'imr', ruleSet: 'nelson' });
    expect(res.status).toBe(200);
    const c = res.body as ControlChartView;
    expect(c.location.points.length).toBe(c.spread!.points.length + 1);
    for (const v of c.violations) {
      expect(v.at.rules).toContain(v.rule);
      expect(v.serials.length).toBeGreaterThan(0);
    }
    expect(c.violations.length).toBeGreaterThan(0);
  });

  it('draws X̄-S subgroups of five consecutive units', async () => {
    const res = await get('/api/analysis/control-chart', {
      model: modelId,
      chart: 'xbar-s',
      subgroupSize: 5,
    });
    const c = res.body as ControlChartView;
    expect(c.location.points[0].unitIds).toHaveLength(5);
  });
});

describe('line health', () => {
  it('gives first-pass yield and retest rate per station per day, and failed checks in plain names', async () => {
    const res = await get('/api/analysis/line-health', { model: modelId });
    expect(res.status).toBe(200);
    const h = res.body as LineHealthView;
    expect(h.days.length).toBeGreaterThan(10);
    for (const d of h.days) {
      if (d.firstPassYieldPct !== null) expect(d.firstPassYieldPct).toBeGreaterThanOrEqual(0);
      if (d.firstPassYieldPct !== null) expect(d.firstPassYieldPct).toBeLessThanOrEqual(100);
    }
    for (const f of h.failedChecks) expect(f.label).not.toMatch(/\./);
    expect(h.placementTrend.length).toBeGreaterThan(5);
  });
});

describe('export', () => {
  it('renders a one-page capability report PDF with the figures and their reading', async () => {
    const res = await get('/api/analysis/capability-report.pdf', { model: modelId, verdict: 'pass' })
      .buffer(true)
      .parse((r, cb) => {
        const parts: Buffer[] = [];
        r.on('data', (c: Buffer) => parts.push(c));
        r.on('end', () => cb(null, Buffer.concat(parts)));
      });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const parser = new PDFParse({ data: new Uint8Array(res.body as Buffer) });
    try {
      const text = await parser.getText();
      expect(text.pages).toHaveLength(1);
      expect(text.text).toContain('Process capability report');
      expect(text.text).toContain('CV-57B');
      expect(text.text).toMatch(/Cpk \(within\)/);
      expect(text.text).toMatch(/Reading:/);
    } finally {
      await parser.destroy();
    }
  }, 60_000);

  it('streams the filtered calibrations as CSV with units in the headers, one row per calibration', async () => {
    const station = options.stations.find((s) => s.name === 'EOL-21')!.id;
    const query = { model: modelId, stations: station, verdict: 'pass' };
    const res = await get('/api/analysis/calibrations.csv', query)
      .buffer(true)
      .parse((r, cb) => {
        let text = '';
        r.setEncoding('utf8');
        r.on('data', (c: string) => (text += c));
        r.on('end', () => cb(null, text));
      });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    const parsed = Papa.parse<string[]>((res.body as string).replace(/^\uFEFF/, ''), {
      skipEmptyLines: true,
    });
    expect(parsed.errors).toEqual([]);
    const [header, ...rows] = parsed.data;
    expect(header).toContain('Offset (electrical degrees)');
    const n = ((await get('/api/analysis/distribution', query)).body as DistributionView).n;
    expect(rows).toHaveLength(n);
    expect(rows.every((r) => r[1] === 'EOL-21' && r[3] === 'pass')).toBe(true);
  });
});

it('does not let a line operator read line statistics', async () => {
  const operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  const res = await request(t.app)
    .get('/api/analysis/options')
    .query({ model: modelId })
    .set('Cookie', operator);
  expect(res.status).toBe(403);
});
