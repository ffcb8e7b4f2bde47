import type { ModelView } from '#shared/schemas/models';
import type { StationView } from '#shared/schemas/stations';
import { createRng } from '#shared/simulation/rng';
import { simulateMeasurement, type SimulationSpec } from '#shared/simulation/simulate';
import { baseUrl, DEMO } from './browser-kit';

/** A signed-in API session over fetch (cookie kept by hand), for setting up what a browser test needs. */
export async function apiSession(username: string, password: string) {
  const response = await fetch(`${baseUrl()}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ username, password }),
  });
  if (!response.ok) throw new Error(`sign-in as ${username} answered ${response.status}`);
  const cookie = response.headers
    .getSetCookie()
    .map((c) => c.split(';')[0])
    .join('; ');
  const call = async <T>(method: string, path: string, body?: unknown): Promise<T> => {
    const r = await fetch(`${baseUrl()}${path}`, {
      method,
      // The origin a page of this server would send: cookie requests from elsewhere are refused.
      headers: {
        cookie,
        origin: baseUrl(),
        ...(body === undefined ? {} : { 'content-type': 'application/json' }),
      },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    if (!r.ok) throw new Error(`${method} ${path} answered ${r.status}: ${await r.text()}`);
    return (r.status === 204 || r.status === 202 ? undefined : await r.json()) as T;
  };
  return { call };
}

export type TestBench = { station: StationView; model: ModelView; key: string };

/**
 * The station the browser tests drive: made (or found) by the administrator through the admin API, with
 * a fresh key each run, so the tests do not depend on the demo seed's key file.
 */
export async function ensureTestBench(name = 'BT-01'): Promise<TestBench> {
  const admin = await apiSession(DEMO.admin.username, DEMO.admin.password);
  const { models } = await admin.call<{ models: ModelView[] }>('GET', '/api/models');
  const model = models.find((m) => m.activeRecipe !== null);
  if (!model) throw new Error('No model with a released recipe: the demo line has not been seeded yet.');
  const { stations } = await admin.call<{ stations: StationView[] }>('GET', '/api/stations');
  let station = stations.find((s) => s.name === name);
  if (!station) {
    ({ station } = await admin.call<{ station: StationView }>('POST', '/api/admin/stations', {
      name,
      line: 'Browser test line',
      allowedModelIds: [model.id],
    }));
  } else if (!station.allowedModels.some((m) => m.id === model.id)) {
    ({ station } = await admin.call<{ station: StationView }>('PATCH', `/api/admin/stations/${station.id}`, {
      allowedModelIds: [model.id],
    }));
  }
  const { key } = await admin.call<{ key: string }>('POST', `/api/admin/stations/${station.id}/keys`, {
    label: `browser test ${new Date().toISOString()}`,
  });
  return { station, model, key };
}

export type SimFault = 'none' | 'large-offset' | 'dead-sensor';

/**
 * A simulated measurement matching the model's recipe (poles, hall layout, detector delay, speed window
 * and turns), coasting down forward then in reverse. `large-offset` puts the true offset 20° beyond the
 * recipe's window; `dead-sensor` leaves hall C stuck.
 */
export function buildMeasurement(
  model: ModelView,
  serial: string,
  seed: number,
  fault: SimFault = 'none',
  offsetDeg = 3.4,
) {
  const recipe = model.activeRecipe!.body;
  const [minRpm, maxRpm] = recipe.limits.speedRpm;
  const turns = Math.ceil(recipe.limits.minElectricalRevs * 2.5);
  const spec: SimulationSpec = {
    polePairs: recipe.polePairs,
    hallRiseDeg: recipe.hallRiseDeg,
    offsetDeg: fault === 'large-offset' ? recipe.limits.offsetDeg[1] + 20 : offsetDeg,
    sensorErrorDeg: { A: 0.3, B: -0.4, C: 0.1 },
    hysteresisDeg: 0.3,
    latencyUs: 1,
    jitterUs: 0.8,
    bemfDelayUs: recipe.bemfDelayUs,
    channels: ['A', 'B', 'C'],
    deadSensor: fault === 'dead-sensor' ? 'C' : undefined,
    measurementId: `bt-${serial}-${seed}`,
    serial,
    segments: (['forward', 'reverse'] as const).map((direction) => ({
      direction,
      profile: {
        kind: 'coast' as const,
        startRpm: minRpm + (maxRpm - minRpm) * 0.7,
        endRpm: minRpm + (maxRpm - minRpm) * 0.4,
      },
      electricalTurns: turns,
    })),
  };
  return simulateMeasurement(spec, createRng(seed));
}

/** Posts a measurement as the station does, with its key. */
export async function postMeasurement(key: string, measurement: unknown) {
  const response = await fetch(`${baseUrl()}/api/station/measurements`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-station-key': key },
    body: JSON.stringify(measurement),
  });
  const body = (await response.json()) as {
    measurementId?: string;
    error?: { code: string; message: string };
  };
  return { status: response.status, body };
}

/** A serial nobody has used: the test's own prefix and the clock. */
export function freshSerial(prefix = 'BT'): string {
  return `${prefix}-${Date.now().toString(36).toUpperCase()}${Math.floor(Math.random() * 1296)
    .toString(36)
    .toUpperCase()}`;
}
