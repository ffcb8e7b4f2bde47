import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, sessionCookie, TEST_ORIGIN, type TestApp } from '#tests/harness/test-app';
import { seedDemoLine } from '../demo/demo-line.seed';
import type { AnalysisOptions, ControlChartView, LimitHistory, LimitSetView } from '#shared/schemas/analysis';
import type { WatchedChartView } from '#shared/schemas/alerts';

// A Thursday: the seeded fortnight runs from 5 to 19 November 2026.
const NOW = new Date('2026-11-19T09:30:00Z');
const WINDOW = { baselineFrom: '2026-11-05T00:00:00Z', baselineTo: '2026-11-09T00:00:00Z' };

let t: TestApp;
let engineer: string;
let quality: string;
let modelId: string;
let eol21: string;
let eol23: string;

beforeAll(async () => {
  t = await createTestApp();
  t.setNow(NOW);
  await seedDemoLine(t.deps, { units: 300, now: NOW });
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  const models = await request(t.app).get('/api/models').set('Cookie', engineer);
  modelId = models.body.models.find((m: { code: string }) => m.code === 'CV-57B').id;
  const options = (
    await request(t.app).get('/api/analysis/options').query({ model: modelId }).set('Cookie', engineer)
  ).body as AnalysisOptions;
  eol21 = options.stations.find((s) => s.name === 'EOL-21')!.id;
  eol23 = options.stations.find((s) => s.name === 'EOL-23')!.id;
}, 180_000);

afterAll(async () => {
  await t?.close();
});

const post = (path: string, body: object, cookie = engineer) =>
  request(t.app).post(path).set('Origin', TEST_ORIGIN).set('Cookie', cookie).send(body);
const chart = (query: Record<string, string>) =>
  request(t.app)
    .get('/api/analysis/control-chart')
    .query({ model: modelId, ...query })
    .set('Cookie', engineer);

describe('frozen control limits', () => {
  let first: LimitSetView;

  it('saves limits from a baseline window as version 1, with who set them and why (audited)', async () => {
    const preview = (await chart({ stations: eol21, ...WINDOW })).body as ControlChartView;
    expect(preview.baseline.source).toBe('window');
    const res = await post('/api/analysis/limits', {
      model: modelId,
      stations: [eol21],
      ...WINDOW,
      reason: 'Stable week after the fixture change',
    });
    expect(res.status).toBe(201);
    first = res.body;
    expect(first).toMatchObject({
      version: 1,
      scope: 'station',
      stationId: eol21,
      cleared: false,
      basis: 'imr',
    });
    expect(first.setBy).toBe('Evan Thorsby');
    expect(first.setAt).toBe(NOW.toISOString());
    // The saved figures are the ones the window preview computed.
    expect(first.center).toBeCloseTo(preview.baseline.center, 10);
    expect(first.sigma).toBeCloseTo(preview.baseline.sigma, 10);
    const { rows } = await t.database.pool.query(
      `select actor_name, reason from audit_log where action = 'analysis.limits_frozen' and subject_id = $1`,
      [first.id],
    );
    expect(rows).toEqual([{ actor_name: 'Evan Thorsby', reason: 'Stable week after the fixture change' }]);
  });

  it('draws the station’s charts against the saved limits, saying who set them; “shown” still computes', async () => {
    const saved = (await chart({ stations: eol21 })).body as ControlChartView;
    expect(saved.baseline).toMatchObject({ source: 'saved', center: first.center, sigma: first.sigma });
    expect(saved.baseline.saved).toMatchObject({ version: 1, setBy: 'Evan Thorsby' });
    expect(saved.location.ucl[0]).toBeCloseTo(first.center! + 3 * first.sigma!, 10);
    const ewma = (await chart({ stations: eol21, chart: 'ewma' })).body as ControlChartView;
    expect(ewma.baseline.source).toBe('saved');
    const shown = (await chart({ stations: eol21, limits: 'shown' })).body as ControlChartView;
    expect(shown.baseline.source).toBe('shown');
    // Another station has no limits of its own and the model none: computed.
    expect(((await chart({ stations: eol23 })).body as ControlChartView).baseline.source).toBe('shown');
  });

  it('keeps every version: a new save is version 2 and the database refuses to change a version', async () => {
    const res = await post('/api/analysis/limits', {
      model: modelId,
      stations: [eol21],
      ...WINDOW,
      chart: 'xbar-r',
      subgroupSize: 5,
      reason: 'Re-based on subgroups of five',
    });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ version: 2, basis: 'xbar-r', subgroupSize: 5 });
    const history = (
      await request(t.app)
        .get('/api/analysis/limits')
        .query({ model: modelId, station: eol21 })
        .set('Cookie', engineer)
    ).body as LimitHistory;
    expect(history.versions.map((v) => v.version)).toEqual([2, 1]);
    expect(history.inForce?.version).toBe(2);
    await expect(t.database.pool.query(`update control_limit_sets set center = 0`)).rejects.toThrow();
    await expect(t.database.pool.query(`delete from control_limit_sets`)).rejects.toThrow();
  });

  it('applies the model’s limits to a station without its own, and a clearing version returns to computed', async () => {
    const model = await post('/api/analysis/limits', {
      model: modelId,
      ...WINDOW,
      reason: 'Line-wide baseline',
    });
    expect(model.status).toBe(201);
    expect(model.body).toMatchObject({ version: 1, scope: 'model', stationId: null });
    const at23 = (await chart({ stations: eol23 })).body as ControlChartView;
    expect(at23.baseline.saved).toMatchObject({ scope: 'model' });
    const cleared = await post('/api/analysis/limits/clear', {
      model: modelId,
      station: eol21,
      reason: 'Fixture replaced; limits to be re-based',
    });
    expect(cleared.status).toBe(201);
    expect(cleared.body).toMatchObject({ version: 3, cleared: true, center: null });
    // The station's own clearing wins over the model's limits.
    expect(((await chart({ stations: eol21 })).body as ControlChartView).baseline.source).toBe('shown');
    const again = await post('/api/analysis/limits/clear', {
      model: modelId,
      station: eol21,
      reason: 'again',
    });
    expect(again.status).toBe(409);
  });

  it('refuses limits over several stations, limits from quality staff, and an empty window', async () => {
    const two = await post('/api/analysis/limits', {
      model: modelId,
      stations: [eol21, eol23],
      ...WINDOW,
      reason: 'Both stations',
    });
    expect(two.status).toBe(422);
    expect(two.body.error.code).toBe('analysis.limits_one_station');
    const q = await post(
      '/api/analysis/limits',
      { model: modelId, ...WINDOW, reason: 'Quality try' },
      quality,
    );
    expect(q.status).toBe(403);
    const empty = await post('/api/analysis/limits', {
      model: modelId,
      baselineFrom: '2025-01-01T00:00:00Z',
      baselineTo: '2025-01-02T00:00:00Z',
      reason: 'Before anything was made',
    });
    expect(empty.status).toBe(422);
  });
});

describe('choosing the watched charts', () => {
  it('lists the default charts of each station × model: individuals with Western Electric 1–4 and an EWMA', async () => {
    const res = await request(t.app).get('/api/alerts/charts').query({ modelId }).set('Cookie', engineer);
    expect(res.status).toBe(200);
    const charts = res.body.charts as WatchedChartView[];
    const at21 = charts.filter((c) => c.stationId === eol21);
    expect(at21.map((c) => [c.kind, c.watched, c.rules, c.changedBy])).toEqual([
      ['imr', true, [1, 2, 3, 4], null],
      ['ewma', true, [1, 2], null],
    ]);
    expect(at21.find((c) => c.kind === 'ewma')).toMatchObject({ lambda: 0.2, limitWidth: 3 });
  });

  it('adds a subgroup chart with Nelson’s rules, stops watching the EWMA, audited, and judges only what comes next', async () => {
    const added = await request(t.app)
      .put('/api/alerts/charts')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ stationId: eol23, modelId, kind: 'xbar-r', watched: true, ruleSet: 'nelson', subgroupSize: 4 });
    expect(added.status).toBe(200);
    expect(added.body).toMatchObject({
      kind: 'xbar-r',
      ruleSet: 'nelson',
      rules: [1, 2, 3, 4, 5, 6, 7, 8],
      subgroupSize: 4,
      changedBy: 'Evan Thorsby',
      judged: 0,
    });
    // It inherits the pair's own limits (or the frozen ones) instead of collecting a baseline again.
    expect(added.body.limits).not.toBe('pending');
    const off = await request(t.app)
      .put('/api/alerts/charts')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ stationId: eol23, modelId, kind: 'ewma', watched: false, lambda: 0.1, limitWidth: 2.7 });
    expect(off.body).toMatchObject({ watched: false, lambda: 0.1, limitWidth: 2.7 });
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from audit_log where action = 'alerts.watched_chart_set'`,
    );
    expect(rows[0].n).toBe(2);
  });

  it('refuses rules outside the chosen set and settings from quality staff', async () => {
    const bad = await request(t.app)
      .put('/api/alerts/charts')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({
        stationId: eol21,
        modelId,
        kind: 'imr',
        watched: true,
        ruleSet: 'western-electric',
        rules: [5],
      });
    expect(bad.status).toBe(400);
    const q = await request(t.app)
      .put('/api/alerts/charts')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ stationId: eol21, modelId, kind: 'imr', watched: false });
    expect(q.status).toBe(403);
  });

  it('shows “frozen” on the charts of a station whose offset limits are saved', async () => {
    const res = await request(t.app)
      .get('/api/alerts/charts')
      .query({ stationId: eol23, modelId })
      .set('Cookie', engineer);
    // The model-wide limits saved above are in force at EOL-23.
    expect((res.body.charts as WatchedChartView[]).every((c) => c.limits === 'frozen')).toBe(true);
  });
});

describe('time presets and subgroups by hour and by shift (plant time)', () => {
  it('resolves “the last 7 days” on the server from local midnight six days ago', async () => {
    const preset = await request(t.app)
      .get('/api/analysis/distribution')
      .query({ model: modelId, range: 'week' })
      .set('Cookie', engineer);
    // The test app's plant zone is UTC: the 13th at 00:00 to now.
    const explicit = await request(t.app)
      .get('/api/analysis/distribution')
      .query({ model: modelId, from: '2026-11-13T00:00:00Z' })
      .set('Cookie', engineer);
    expect(preset.status).toBe(200);
    expect(preset.body.n).toBe(explicit.body.n);
    const all = await request(t.app)
      .get('/api/analysis/distribution')
      .query({ model: modelId })
      .set('Cookie', engineer);
    expect(preset.body.n).toBeLessThan(all.body.n);
  });

  it('takes up to N units of each shift as a subgroup, labelled with the shift, limits per subgroup size', async () => {
    // The demo seed keeps the plant's shifts (through the qualification module).
    const options = (
      await request(t.app).get('/api/analysis/options').query({ model: modelId }).set('Cookie', engineer)
    ).body as AnalysisOptions;
    expect(options.shifts.length).toBeGreaterThan(1);
    const names = options.shifts.map((s) => s.name);
    const res = await chart({ chart: 'xbar-r', subgroupBy: 'shift', subgroupSize: '4', limits: 'shown' });
    expect(res.status).toBe(200);
    const v = res.body as ControlChartView;
    expect(v.location.points.length).toBeGreaterThan(5);
    for (const p of v.location.points) {
      expect(names).toContain(p.period!.slice(11));
      expect(p.period!.slice(0, 8)).toBe('2026-11-');
      expect(p.unitIds.length).toBeGreaterThanOrEqual(2);
      expect(p.unitIds.length).toBeLessThanOrEqual(4);
    }
    expect(new Set(v.location.points.map((p) => p.period)).size).toBe(v.location.points.length);
    // A subgroup of 2 has wider limits than one of 4 (σ/√n).
    const half = v.location.points.map((p, i) => [
      p.unitIds.length,
      v.location.ucl[i] - v.location.center[i],
    ]);
    const of = (n: number) => half.find(([k]) => k === n)?.[1];
    if (of(2) !== undefined && of(4) !== undefined) expect(of(2)! / of(4)!).toBeCloseTo(Math.SQRT2, 8);
    const hourly = await chart({ chart: 'xbar-s', subgroupBy: 'hour', subgroupSize: '3', limits: 'shown' });
    expect([200, 422]).toContain(hourly.status);
  });
});
