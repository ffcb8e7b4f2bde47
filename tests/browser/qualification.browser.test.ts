import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { baseUrl, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import {
  apiSession,
  buildMeasurement,
  ensureTestBench,
  freshSerial,
  postMeasurement,
  type TestBench,
} from './line-kit';

let browser: Browser;
let bench: TestBench;
let refSerial: string;

/** Posts a reading of a reference unit as the station's rig does, with its key. */
async function postReading(key: string, measurement: unknown) {
  const r = await fetch(`${baseUrl()}/api/station/qualification-readings`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-station-key': key },
    body: JSON.stringify(measurement),
  });
  return {
    status: r.status,
    body: (await r.json()) as { run: { verdict: string }; state: { kind: string } },
  };
}

beforeAll(async () => {
  browser = await launchChromium();
  // A bench station of its own, so the other station tests never meet a lock.
  bench = await ensureTestBench('BT-Q1');
  const engineer = await apiSession(DEMO.engineer.username, DEMO.engineer.password);
  refSerial = freshSerial('RBT');
  await engineer.call('POST', '/api/units', { serial: refSerial, modelId: bench.model.id });
  const { referenceUnit } = await engineer.call<{ referenceUnit: { id: string } }>(
    'POST',
    '/api/qualification/reference-units',
    { serial: refSerial, toleranceDeg: 0.3 },
  );
  // Certified from three readings at the bench, like a plant certifies a reference unit.
  for (const seed of [1, 2, 3]) {
    const { measurement } = buildMeasurement(bench.model, refSerial, seed);
    expect(
      (await postReading(bench.key, { ...measurement, measurementId: crypto.randomUUID() })).status,
    ).toBe(201);
  }
  await engineer.call('POST', `/api/qualification/reference-units/${referenceUnit.id}/certify`, {
    stationId: bench.station.id,
    readings: 3,
  });
  await engineer.call('PUT', `/api/stations/${bench.station.id}/qualification/policy`, {
    atShiftStart: false,
    everyHours: 8,
    everyUnits: null,
    referenceUnitIds: [referenceUnit.id],
  });
}, 90_000);
afterAll(async () => {
  await browser?.close();
});

async function openBench(page: Page) {
  await signInWithPassword(page, DEMO.operator.username, DEMO.operator.password);
  await page.goto(`/station/${bench.station.id}`);
  await page.getByTestId('station-screen').waitFor();
}

describe('station qualification at the station screen', { timeout: 90_000 }, () => {
  it('refuses an overdue station, qualifies it with the reference unit, then calibrates a production unit', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await openBench(page);
    const banner = page.getByTestId('qualification-banner');
    await banner.waitFor();
    expect(await banner.getAttribute('data-kind')).toBe('overdue');
    expect(await banner.textContent()).toContain(`Overdue — measure reference unit ${refSerial}`);

    // Production is refused while overdue, and nothing is stored for the refused unit.
    const serial = freshSerial();
    const refused = await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 21).measurement);
    expect(refused.status).toBe(423);
    expect(refused.body.error?.code).toBe('qualification.overdue');
    const operator = await apiSession(DEMO.operator.username, DEMO.operator.password);
    await expect(operator.call('GET', `/api/units/${serial}`)).rejects.toThrow(/answered 404/);

    // The operator measures the reference unit: the rig posts it as a qualification reading.
    const { measurement } = buildMeasurement(bench.model, refSerial, 22);
    const reading = await postReading(bench.key, { ...measurement, measurementId: crypto.randomUUID() });
    expect(reading.status).toBe(201);
    expect(reading.body.run.verdict).toBe('pass');
    await page.waitForFunction(
      () =>
        document.querySelector('[data-testid="qualification-banner"]')?.getAttribute('data-kind') ===
        'qualified',
      undefined,
      { timeout: 15_000 },
    );
    expect(await banner.textContent()).toMatch(/Qualified until \d\d:\d\d/);

    // Now the same unit calibrates.
    await page.keyboard.type(serial, { delay: 8 });
    await page.keyboard.press('Enter');
    const posted = await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 23).measurement);
    expect(posted.status).toBe(202);
    const verdict = page.getByTestId('verdict');
    await verdict.waitFor({ timeout: 20_000 });
    expect(await verdict.getAttribute('data-verdict')).toBe('pass');
    expect(pageErrors).toEqual([]);
    await context.close();
  });
});
