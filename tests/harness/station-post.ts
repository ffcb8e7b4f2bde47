import request from 'supertest';
import { expect } from 'vitest';
import { computeCalibration } from '#server/modules/measurements/measurements.service';
import type { Measurement } from '#shared/schemas/measurement';
import type { TestApp } from './test-app';

/**
 * Posts a measurement with a line fixture's station key and computes it, as the station and the worker
 * would; the calibration's id.
 */
export async function postAndCompute(
  t: TestApp,
  line: { key: string; recipe: { id: string } },
  m: Measurement,
): Promise<string> {
  const posted = await request(t.app)
    .post('/api/station/measurements')
    .set('X-Station-Key', line.key)
    .send(m);
  expect(posted.status).toBe(202);
  const { rows } = await t.database.pool.query('select id from measurements where measurement_id = $1', [
    m.measurementId,
  ]);
  const ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
  const { calibrationId } = await computeCalibration(ctx, {
    measurementPk: rows[0].id,
    recipeId: line.recipe.id,
  });
  return calibrationId;
}
