import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { sessionCookie } from '#tests/harness/test-app';
import { seedDemoAccounts } from '../db/seed';
import { parseEnv } from '../env';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { StationHttp, StationHttpError } from '../modules/demo/station-client';
import { API_NODE_FLAGS, TSX, startService, waitForHttp, type Service } from './services.mjs';

/**
 * Two API processes, two compute workers and two renderers against one database, as real processes.
 * 1,000 units are posted spread over both API processes, a tenth of them to both at once; half-way, one of
 * each kind of process is killed (SIGKILL, no goodbye). Afterwards every unit has exactly one measurement,
 * one station calibration and one first traveler: nothing lost, nothing twice. Each result is long-polled
 * on the other API process than the one that took the post, so a result reaches a client whichever
 * process it asks (the events travel by LISTEN/NOTIFY); a station panel's event stream (SSE) opened on the
 * process that survives sees the units posted to the one that is killed.
 */
const UNITS = Number(process.env.MULTI_PROCESS_UNITS ?? 1000);
const DUPLICATE_EVERY = 10; // every 10th unit is posted to both API processes at once
const IN_FLIGHT = 12;
// Ports derived from PORT so engineers running suites side by side do not collide.
const BASE_PORT = Number(process.env.PORT ?? 3000) + 10;

let database: TestDatabase;
let line: Awaited<ReturnType<typeof createLineFixture>>;
const services: Service[] = [];

function processEnv(port: number) {
  return {
    ...process.env,
    NODE_ENV: 'test' as const,
    DATABASE_URL: database.url,
    MIGRATE_ON_START: 'false',
    PORT: String(port),
    SEED_DEMO: 'false',
    LOG_LEVEL: 'error',
    CLIENT_DIST: '/nonexistent',
    SMTP_URL: `smtp://127.0.0.1:${port + 100}`,
    MAILBOX_URL: '',
    // A killed worker's jobs are noticed within a second or two (production: every 10 s).
    QUEUE_MAINTENANCE_SECONDS: '1',
  };
}

function start(name: string, args: string[], port: number, queues?: string) {
  const service = startService(name, TSX, args, {
    env: { ...processEnv(port), ...(queues ? { WORKER_QUEUES: queues } : {}) },
    quiet: true,
  });
  services.push(service);
  return service;
}

function kill(service: Service) {
  process.kill(-service.child.pid!, 'SIGKILL');
}

async function count(sql: string): Promise<number> {
  const { rows } = await database.pool.query<{ n: number }>(sql);
  return rows[0].n;
}

async function until(what: string, check: () => Promise<boolean>, timeoutMs: number) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`timed out waiting for ${what}`);
}

beforeAll(async () => {
  database = await createTestDatabase();
  line = await createLineFixture(database.db);
  await seedDemoAccounts(database.db, parseEnv({ ...process.env, DATABASE_URL: database.url }).BCRYPT_COST);
  // A job whose worker was killed is retried once its expiry passes: a short one keeps the test short.
  for (const name of ['calibration-compute', 'traveler-render']) {
    await database.ownerPool().query(`update pgboss.queue set expire_seconds = 5 where name = $1`, [name]);
  }
}, 60_000);

afterAll(async () => {
  await Promise.all(services.map((s) => s.stop()));
  await database?.drop();
}, 60_000);

describe('two API processes, two compute workers and two renderers on one database', () => {
  it(
    'store every unit once, calibrate it once and print its traveler once, though one of each is killed half-way',
    { timeout: 420_000 },
    async () => {
      const ports = [BASE_PORT, BASE_PORT + 1];
      const apis = ports.map((port, i) => start(`api-${i + 1}`, [...API_NODE_FLAGS, 'server/main.ts'], port));
      await Promise.all(apis.map((api, i) => waitForHttp(`http://127.0.0.1:${ports[i]}/api/health`, api)));
      const computeQueues = 'calibration-compute,chart-watch,housekeeping';
      const workers = [1, 2].map((i) => start(`worker-${i}`, ['jobs/worker.ts'], ports[0], computeQueues));
      const renderers = [1, 2].map((i) =>
        start(`renderer-${i}`, ['jobs/worker.ts'], ports[0], 'traveler-render'),
      );
      // A short retry budget per process: a station that cannot reach one process turns to the other.
      const retry = { retryForMs: 1500, firstDelayMs: 100, maxDelayMs: 500 };
      const http = ports.map((port) => new StationHttp(`http://127.0.0.1:${port}`, line.key, retry));
      const alive = [true, true];

      // A station panel follows the line's events on API process 1; units posted to process 2 show there.
      const cookie = await sessionCookie(
        `http://127.0.0.1:${ports[0]}` as never,
        'olga.operator',
        'demo-operator-pass',
      );
      const stream = await fetch(`http://127.0.0.1:${ports[0]}/api/stations/${line.station.id}/events`, {
        headers: { cookie },
      });
      expect(stream.status).toBe(200);
      const seen = { text: '' };
      const unitOneEvents = () => seen.text.split('\n\n').filter((e) => e.includes('"SN-MP-00001"'));
      const unitOneHas = (type: string) => unitOneEvents().some((e) => e.startsWith(`event: ${type}\n`));
      const reading = (async () => {
        const decoder = new TextDecoder();
        for await (const chunk of stream.body as unknown as AsyncIterable<Uint8Array>) {
          seen.text += decoder.decode(chunk, { stream: true });
          if (unitOneHas('traveler.ready')) break;
        }
      })().catch(() => {});

      // A station that cannot reach one process posts to the other (a retry of the same measurement id).
      const postVia = async (first: number, m: ReturnType<typeof simulatedMeasurement>) => {
        for (const i of [first, 1 - first]) {
          if (!alive[i]) continue;
          try {
            return await http[i].post(m);
          } catch (e) {
            if (!(e instanceof StationHttpError) || e.status !== null) throw e;
          }
        }
        throw new Error(`${m.serial}: no API process answered`);
      };

      const results: { serial: string; verdict: string }[] = [];
      let next = 0;
      let killed = false;
      const one = async (i: number) => {
        const m = simulatedMeasurement(line.recipe.body, `SN-MP-${String(i).padStart(5, '0')}`, { seed: i });
        const home = i % 2;
        const accepted =
          i % DUPLICATE_EVERY === 0
            ? (await Promise.all([postVia(0, m), postVia(1, m)]))[0]
            : await postVia(home, m);
        // Long-poll on the other process than the one that took the post, when it is alive.
        const reader = alive[1 - home] ? 1 - home : home;
        let result = null;
        for (let attempt = 0; attempt < 6 && !result; attempt += 1) {
          const at = alive[reader] ? reader : 1 - reader;
          try {
            result = await http[at].result(accepted.resultUrl, 60_000);
          } catch (e) {
            if (!(e instanceof StationHttpError) || e.status !== null) throw e;
          }
        }
        if (!result) throw new Error(`${m.serial}: no result`);
        results.push({ serial: m.serial, verdict: result.verdict });
      };
      await Promise.all(
        Array.from({ length: IN_FLIGHT }, async () => {
          while (next < UNITS) {
            const i = next++;
            if (!killed && i >= UNITS / 2) {
              killed = true;
              // Half-way: one of each, without warning, while posts and jobs are in flight.
              alive[1] = false;
              kill(apis[1]);
              kill(workers[0]);
              kill(renderers[0]);
            }
            await one(i);
          }
        }),
      );
      expect(results).toHaveLength(UNITS);
      // Unit 1 went to process 2: its events reached the stream on process 1.
      await until(
        'the stream to show unit 1 posted to the other process',
        async () => unitOneHas('traveler.ready'),
        120_000,
      );
      expect(unitOneHas('measurement.received')).toBe(true);
      expect(unitOneHas('calibration.committed')).toBe(true);
      await stream.body?.cancel().catch(() => {});
      await reading;

      expect(await count(`select count(*)::int as n from measurements`)).toBe(UNITS);
      expect(await count(`select count(distinct serial)::int as n from measurements`)).toBe(UNITS);
      expect(await count(`select count(*)::int as n from calibrations where purpose = 'station'`)).toBe(
        UNITS,
      );
      expect(
        await count(
          `select count(distinct measurement_pk)::int as n from calibrations where purpose = 'station'`,
        ),
      ).toBe(UNITS);
      // Every calibration with a verdict gets its first traveler, exactly once.
      const withVerdict = await count(
        `select count(*)::int as n from calibrations where purpose = 'station' and verdict in ('pass', 'fail')`,
      );
      expect(withVerdict).toBeGreaterThan(UNITS * 0.9);
      await until(
        'every first traveler',
        async () =>
          (await count(`select count(*)::int as n from travelers where print_number = 1`)) >= withVerdict,
        180_000,
      );
      expect(await count(`select count(*)::int as n from travelers where print_number = 1`)).toBe(
        withVerdict,
      );
      expect(
        await count(`select count(distinct calibration_id)::int as n from travelers where print_number = 1`),
      ).toBe(withVerdict);
    },
  );
});
