import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensurePostgres, stopPostgres } from './pg-local.mjs';
import { freePort } from './services.mjs';
import { demoModel, type DemoRig } from '../modules/demo/demo-line.scenario';
import { runStationSim, StationHttp, type StationSimReport } from '../modules/demo/station-client';

// `npm start` under fire: the whole stack on a private database instance of its own (chaos), a
// simulated station posting units the whole time, and each process killed with SIGKILL in turn —
// the server, the calibration worker, the traveler renderer, the fake mail server, the fake object store and the PostgreSQL
// postmaster. Afterwards every measurement accepted during the run has exactly one station
// calibration and one traveler, and the station (whose retries a real station has too) lost no unit.
// Recovery times are printed, not asserted (they depend on the machine's load).
const repoRoot = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const INSTANCE = 'chaos';
const RIG: DemoRig = { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 };
const LOAD_UNITS = 24;
const RETRY = { retryForMs: 120_000, firstDelayMs: 200, maxDelayMs: 2000 };

interface RunState {
  services: Record<string, { pid: number | null; restarts: { exitedAt: string; upAt: string | null }[] }>;
  postgres: { dataDir: string; restarts: { stoppedAt: string; upAt: string }[] } | null;
}

let stack: ChildProcess | null = null;
let output = '';
let appUrl = '';
let baseUrl = '';
let mailUrl = '';
let objectsUrl = '';
let key = '';
let workDir = '';
const testStart = new Date();

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const state = (): RunState =>
  JSON.parse(readFileSync(join(repoRoot, '.data', `run-${INSTANCE}.json`), 'utf8'));

async function until<T>(
  what: string,
  timeoutMs: number,
  probe: () => Promise<T | undefined | false>,
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    try {
      const v = await probe();
      if (v) return v;
    } catch {
      // not yet
    }
    if (Date.now() > deadline)
      throw new Error(`${what}: not within ${timeoutMs / 1000} s\n${output.slice(-3000)}`);
    await sleep(100);
  }
}

beforeAll(async () => {
  // A fresh database on the chaos instance: stop anything a crashed earlier run left, drop its data.
  const handle = await ensurePostgres({ instance: INSTANCE, log: () => {} });
  appUrl = handle.url;
  const admin = new pg.Client({ connectionString: handle.adminUrl });
  await admin.connect();
  await admin.query(`drop database if exists "${handle.database}" with (force)`);
  await admin.end();

  workDir = mkdtempSync(join(tmpdir(), 'pw-supervision-'));
  const [port, smtpPort, mailPort, storagePort] = [
    await freePort(),
    await freePort(),
    await freePort(),
    await freePort(),
  ];
  objectsUrl = `http://127.0.0.1:${storagePort}/_health`;
  baseUrl = `http://127.0.0.1:${port}`;
  mailUrl = `http://127.0.0.1:${mailPort}/messages`;
  const keyFile = join(workDir, 'demo-station-key.json');
  stack = spawn(process.execPath, ['server/ops/start.mjs', '--no-build'], {
    cwd: repoRoot,
    detached: true,
    stdio: ['ignore', 'pipe', 'pipe'],
    env: {
      ...process.env,
      PG_INSTANCE: INSTANCE,
      PORT: String(port),
      FAKE_SMTP_PORT: String(smtpPort),
      FAKE_MAIL_HTTP_PORT: String(mailPort),
      FAKE_STORAGE_PORT: String(storagePort),
      FAKE_STORAGE_DIR: join(workDir, 'objects'),
      STORAGE_ENDPOINT: '',
      DEMO_KEY_FILE: keyFile,
      DEMO_LINE_UNITS: '8',
      QUEUE_MAINTENANCE_SECONDS: '2',
      LOG_LEVEL: 'warn',
      SMTP_URL: '',
      DATABASE_URL: '',
      DATABASE_OWNER_URL: '',
    },
  });
  stack.stdout!.on('data', (c: Buffer) => (output += c.toString()));
  stack.stderr!.on('data', (c: Buffer) => (output += c.toString()));
  await until('the stack is up', 180_000, async () => output.includes('Phasewright is running'));
  key = (JSON.parse(readFileSync(keyFile, 'utf8')) as { key: string }).key;
}, 240_000);

afterAll(async () => {
  if (stack?.pid && stack.exitCode === null) {
    process.kill(stack.pid, 'SIGTERM');
    await new Promise<void>((resolve) => {
      const t = setTimeout(() => {
        try {
          process.kill(-stack!.pid!, 'SIGKILL');
        } catch {
          // gone
        }
        resolve();
      }, 30_000);
      stack!.once('exit', () => {
        clearTimeout(t);
        resolve();
      });
    });
  }
  await stopPostgres({ instance: INSTANCE, log: () => {} });
  rmSync(workDir, { recursive: true, force: true });
}, 60_000);

/** One simulated unit end to end (post, result, programming confirmation) and its traveler. */
async function probeUnit(pool: pg.Pool, tag: string): Promise<StationSimReport> {
  const serialPrefix = `PROBE-${tag}-${Date.now().toString(36)}`.toUpperCase();
  const report = await runStationSim({
    http: new StationHttp(baseUrl, key, RETRY),
    model: demoModel('CV-57B'),
    rig: RIG,
    units: 1,
    ratePerSecond: 0,
    concurrency: 1,
    seed: Date.now() % 100_000,
    badRate: 0,
    serialPrefix,
    resultTimeoutMs: 120_000,
  });
  await until(`traveler of ${serialPrefix}`, 120_000, async () => {
    const { rows } = await pool.query(
      `select 1 from travelers t join units u on u.id = t.unit_id where u.serial like $1 || '%'`,
      [serialPrefix],
    );
    return rows.length > 0;
  });
  return report;
}

describe('npm start keeps the line running when a process dies', () => {
  it('restarts each killed process and the database; every accepted measurement gets one calibration and one traveler; no unit is lost', async () => {
    const errors: string[] = [];
    const load = runStationSim({
      http: new StationHttp(baseUrl, key, RETRY),
      model: demoModel('CV-57B'),
      rig: RIG,
      units: LOAD_UNITS,
      ratePerSecond: 3,
      concurrency: 2,
      seed: 4242,
      badRate: 0,
      serialPrefix: `LOAD-${Date.now().toString(36).toUpperCase()}`,
      resultTimeoutMs: 150_000,
      onError: (m) => errors.push(m),
    });
    // The pool reconnects by itself after the database restarts (see server/db/client.ts).
    const pool = new pg.Pool({ connectionString: appUrl, max: 2 });
    pool.on('error', () => {});
    pool.on('connect', (c) => c.on('error', () => {}));
    const figures: { killed: string; processBackS: number | null; serviceBackS: number }[] = [];
    const probes: StationSimReport[] = [];
    try {
      for (const target of ['server', 'worker', 'renderer', 'mail', 'objects', 'postgres']) {
        await sleep(1500);
        const before = state();
        const t0 = Date.now();
        if (target === 'postgres') {
          const pid = Number(
            readFileSync(join(before.postgres!.dataDir, 'postmaster.pid'), 'utf8').split('\n')[0],
          );
          process.kill(pid, 'SIGKILL');
        } else {
          process.kill(before.services[target].pid!, 'SIGKILL');
        }
        // The supervisor's own record of when the process was started again (for the server and the
        // mail server: answering on HTTP again; for PostgreSQL: accepting connections).
        const restarted = () =>
          until('the restart is recorded', 120_000, async () => {
            const s = state();
            const list = target === 'postgres' ? s.postgres!.restarts : s.services[target].restarts;
            const last = list.at(-1);
            return last?.upAt && Date.parse(last.upAt) >= t0 ? last : undefined;
          });
        if (target === 'mail') {
          await restarted();
          await until('mail answers again', 60_000, async () => (await fetch(mailUrl)).ok);
        } else if (target === 'objects') {
          await restarted();
          await until('the object store answers again', 60_000, async () => (await fetch(objectsUrl)).ok);
        } else probes.push(await probeUnit(pool, target));
        const serviceBackS = (Date.now() - t0) / 1000;
        const after = await restarted();
        const from = 'exitedAt' in after ? after.exitedAt : after.stoppedAt;
        figures.push({
          killed: target,
          processBackS: (Date.parse(after.upAt!) - Date.parse(from)) / 1000,
          serviceBackS,
        });
      }
      const report = await load;

      for (const f of figures) {
        process.stdout.write(
          `recovery after kill -9 of ${f.killed.padEnd(8)}: started again after ${f.processBackS?.toFixed(1)} s, ` +
            `${f.killed === 'mail' ? 'mailbox answering' : f.killed === 'objects' ? 'object store answering' : 'a new unit calibrated with its traveler'} ${f.serviceBackS.toFixed(1)} s after the kill\n`,
        );
      }
      process.stdout.write(
        `station under load: ${report.posted} posts, ${report.passed} passed, ${report.failed} failed, ${report.errors} lost; ` +
          `post → result p50 ${Math.round(report.latenciesMs.sort((a, b) => a - b)[Math.floor(report.latenciesMs.length / 2)] ?? 0)} ms, ` +
          `max ${Math.round(Math.max(0, ...report.latenciesMs))} ms\n`,
      );

      // Each process was restarted once, for its own kill: a database restart crashed nothing else.
      const final = state();
      for (const [name, svc] of Object.entries(final.services))
        expect([name, svc.restarts.length]).toEqual([name, 1]);
      expect(final.postgres!.restarts).toHaveLength(1);

      // The station lost no unit: every one reached its end (programmed, or on hold after its attempts).
      expect(errors).toEqual([]);
      expect(report.errors).toBe(0);
      expect(report.passed + report.failed).toBe(LOAD_UNITS);
      for (const p of probes) expect(p).toMatchObject({ errors: 0, passed: 1 });

      // Every measurement accepted during the run: exactly one station calibration, and for a judged
      // one exactly one first print of its traveler. Jobs a killed worker held are retried once their
      // expiry passes, so this may take up to ~30 s to settle.
      const unsettled = async () => {
        const r = await pool.query<{ measurement_id: string; calibrations: number; travelers: number }>(
          `select m.measurement_id,
                    (select count(*)::int from calibrations c
                      where c.measurement_pk = m.id and c.purpose = 'station') as calibrations,
                    (select count(*)::int from calibrations c
                       join travelers t on t.calibration_id = c.id and t.print_number = 1
                      where c.measurement_pk = m.id and c.purpose = 'station') as travelers
               from measurements m
              where m.received_at >= $1`,
          [testStart],
        );
        return r.rows.filter((x) => x.calibrations !== 1 || x.travelers !== 1);
      };
      await until('every measurement settles', 90_000, async () => (await unsettled()).length === 0).catch(
        () => undefined,
      );
      const bad = await unsettled();
      expect(bad).toEqual([]);
      const { rows: counted } = await pool.query<{ n: number }>(
        'select count(*)::int as n from measurements where received_at >= $1',
        [testStart],
      );
      expect(counted[0].n).toBe(report.posted + probes.reduce((s, p) => s + p.posted, 0));
    } finally {
      await pool.end();
    }
  }, 420_000);
});
