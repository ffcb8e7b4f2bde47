import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '#shared/calibration';
import { EVENTS_CHANNEL } from '#server/modules/events/event-hub';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { claimMeasurements } from './compute.repository';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-CLAIM' });
});
afterAll(async () => {
  await t?.close();
});

/** Posts a body as this text and claims the stored measurement as the worker would. */
async function postAndClaim(text: string, measurementId: string) {
  const posted = await request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', line.key)
    .set('Content-Type', 'application/json')
    .send(text);
  expect(posted.status).toBe(202);
  const { rows } = await t.database.pool.query<{ id: string; payload: unknown; payload_raw: string }>(
    'select id, payload, payload_raw from measurements where measurement_id = $1',
    [measurementId],
  );
  // Stored exactly as posted, however the text travelled to the database.
  expect(rows[0].payload_raw).toBe(text);
  const [claimed] = await claimMeasurements(
    t.deps.pool,
    [{ measurementPk: rows[0].id, recipeId: line.recipe.id }],
    { engineVersion: ENGINE_VERSION, eventsChannel: EVENTS_CHANNEL, atText: new Date().toISOString() },
  );
  return { claimed: claimed!, stored: rows[0].payload };
}

describe('the computation reads the measurement it was given', () => {
  it('keeps the posted text as it came and reads posted timings as the stored canonical body, whether the station posted the canonical text or not', async () => {
    const canonical = simulatedMeasurement(line.recipe.body, 'CLAIM-0001');
    const a = await postAndClaim(JSON.stringify(canonical), canonical.measurementId);
    expect(a.claimed.payload).toEqual(a.stored);
    expect(a.claimed.payload).toEqual(canonical);
    // Keys in another order, spaces and an unknown key: not the canonical text, so the stored body is read.
    const other = simulatedMeasurement(line.recipe.body, 'CLAIM-0002', { seed: 9 });
    const { segments, ...head } = other;
    const text = JSON.stringify({ segments, note: 'ignored', ...head }, null, 2);
    const b = await postAndClaim(text, other.measurementId);
    expect(b.claimed.payload).toEqual(b.stored);
    expect(b.claimed.payload).toEqual(other);
    // Neither hands the posted text on: only captures are computed from it.
    expect([a.claimed.payload_raw, b.claimed.payload_raw]).toEqual([null, null]);
  });
});
