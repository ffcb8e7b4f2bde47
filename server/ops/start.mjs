// `npm start`: installs what is missing, starts the private PostgreSQL, the local fake mail server, the
// local fake object store, the API + client server and the job workers, seeds the demo on first run, and on Ctrl-C (SIGINT or
// SIGTERM) stops everything it started. Until then it supervises: a process that dies is started
// again after a growing pause while the others keep running, and a PostgreSQL server that dies is
// started again (crash recovery) while every process reconnects. `--dev` serves the client from
// Vite's dev server with reload instead; `--no-build` serves the client already built (tests).
// PG_INSTANCE picks the private database instance (default dev).
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { ensureDeps } from './ensure-deps.mjs';
import { ensurePostgres, ensureReplica, postmasterAlive } from './pg-local.mjs';
import { prefixedLog, repoRoot } from './proc.mjs';
import { API_NODE_FLAGS, RENDERER_NODE_OPTIONS, TSX, portInUse, runStep, waitForHttp } from './services.mjs';
import { superviseService } from './supervise.mjs';

const log = prefixedLog('start');
const dev = process.argv.includes('--dev');
// How many of each process: one by default; `--scale` runs two of each; SCALE_API, SCALE_WORKERS and
// SCALE_RENDERERS set each count. The processes share nothing but the database (see README: Scale).
function scaleOf(name) {
  const raw = process.env[name] ?? (process.argv.includes('--scale') ? '2' : '1');
  const n = Number(raw);
  if (!Number.isInteger(n) || n < 1 || n > 16) {
    console.error(`${name} must be a whole number from 1 to 16, not "${raw}".`);
    process.exit(2);
  }
  return n;
}
const scale = {
  api: scaleOf('SCALE_API'),
  workers: scaleOf('SCALE_WORKERS'),
  renderers: scaleOf('SCALE_RENDERERS'),
};
const buildClient = !process.argv.includes('--no-build');
// `--replica`: a hot standby of the private database (port PGPORT_DEV_REPLICA, 55441) that statistics,
// containment searches and exports read from (DATABASE_READ_URL); off by default.
const withReplica = process.argv.includes('--replica');
const instance = process.env.PG_INSTANCE || 'dev';
const port = Number(process.env.PORT ?? 3000);
const smtpPort = Number(process.env.FAKE_SMTP_PORT ?? 2525);
const mailHttpPort = Number(process.env.FAKE_MAIL_HTTP_PORT ?? 2580);
const storagePort = Number(process.env.FAKE_STORAGE_PORT ?? 2590);
const dataDir = join(repoRoot, '.data');
const demoKeyFile = process.env.DEMO_KEY_FILE ?? join(dataDir, 'demo-station-key.json');

/** A session secret kept in the git-ignored data folder, so sessions survive a restart. */
function sessionSecret() {
  if (process.env.SESSION_SECRET) return process.env.SESSION_SECRET;
  const file = join(dataDir, 'session-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dataDir, { recursive: true });
  const secret = randomBytes(32).toString('hex');
  writeFileSync(file, secret, { mode: 0o600 });
  return secret;
}

const services = [];
let pg = null;
let replica = null;
let ownPostgres = false;
let pgWatch = null;
let shuttingDown = false;

async function shutdown(code) {
  if (shuttingDown) return;
  shuttingDown = true;
  clearInterval(pgWatch);
  log('stopping…');
  for (const s of [...services].reverse()) await s.stop();
  if (replica) {
    await replica.stop();
    log('PostgreSQL standby stopped');
  }
  if (pg && ownPostgres) {
    await pg.stop();
    log('PostgreSQL stopped');
  }
  process.exit(code);
}
process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

/**
 * What runs now, for operators and the supervision test: `.data/run-<instance>.json` lists each
 * process's pid, its restarts and when it last came up, and the same for PostgreSQL.
 */
const stateFile = join(dataDir, `run-${instance}.json`);
const pgRestarts = [];
function writeState() {
  const state = {
    supervisorPid: process.pid,
    updatedAt: new Date().toISOString(),
    services: Object.fromEntries(
      services.map((s) => [
        s.name,
        {
          pid: s.current()?.child.pid ?? null,
          restarts: s.restarts.map((r) => ({
            exitedAt: new Date(r.at).toISOString(),
            code: r.code,
            signal: r.signal,
            upAt: r.upAt === null ? null : new Date(r.upAt).toISOString(),
          })),
        },
      ]),
    ),
    postgres: pg && !pg.external ? { dataDir: pg.dataDir, port: pg.port, restarts: pgRestarts } : null,
  };
  try {
    mkdirSync(dataDir, { recursive: true });
    writeFileSync(stateFile, `${JSON.stringify(state, null, 2)}\n`);
  } catch {
    // Only informative: never let it stop the supervisor.
  }
}

/** Starts a supervised process and remembers it for the shutdown. */
function supervise(name, file, args, options) {
  const s = superviseService(name, file, args, { log, onStarted: writeState, ...options });
  services.push(s);
  return s;
}

/**
 * Watches the private PostgreSQL's postmaster every half second; when it is gone (killed, crashed),
 * starts it again: PostgreSQL replays its WAL (crash recovery) and the processes' pools, LISTEN
 * connections and job queues reconnect on their own. An external server (DATABASE_URL) is not ours.
 */
function watchPostgres() {
  if (pg.external) return;
  let restarting = false;
  pgWatch = setInterval(async () => {
    if (restarting || shuttingDown || postmasterAlive(pg.dataDir)) return;
    restarting = true;
    const t0 = Date.now();
    log('PostgreSQL stopped unexpectedly; starting it again (crash recovery)');
    try {
      await ensurePostgres({ instance, log: prefixedLog('postgres') });
      ownPostgres = true;
      log(`PostgreSQL is running again (${((Date.now() - t0) / 1000).toFixed(1)} s)`);
      pgRestarts.push({ stoppedAt: new Date(t0).toISOString(), upAt: new Date().toISOString() });
      writeState();
    } catch (e) {
      log(`PostgreSQL did not start again: ${e instanceof Error ? e.message : String(e)}; retrying`);
    } finally {
      restarting = false;
    }
  }, 500);
}

try {
  await ensureDeps({ log: prefixedLog('deps') });
  if (await portInUse(port)) {
    throw new Error(
      `Port ${port} is already in use. Stop what uses it, or choose another: PORT=3100 npm start`,
    );
  }
  // The client build needs nothing but the files: it runs while the database, the server, the workers
  // and the demo seed start, and is awaited before the banner (first start: the two largest steps overlap).
  let build = null;
  if (!dev && buildClient) {
    log('building the client…');
    build = runStep(join(repoRoot, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn']);
  }
  pg = await ensurePostgres({ instance, log: prefixedLog('postgres') });
  ownPostgres = pg.startedByUs;

  // The processes connect as the app role and never see the owner's credentials: migrations run here,
  // once, as the owner, before anything else starts.
  const env = {
    ...process.env,
    NODE_ENV: dev ? 'development' : 'production',
    DATABASE_URL: pg.url,
    MIGRATE_ON_START: 'false',
    PORT: String(port),
    SESSION_SECRET: sessionSecret(),
    SEED_DEMO: process.env.SEED_DEMO ?? 'true',
  };
  delete env.DATABASE_OWNER_URL;
  log('applying migrations…');
  const migrated = await runStep(TSX, ['server/db/migrate-cli.ts'], {
    ...env,
    DATABASE_OWNER_URL: pg.ownerUrl,
  });
  if (migrated !== 0) throw new Error('The database migrations failed (output above).');
  watchPostgres();
  if (withReplica) {
    if (pg.external)
      throw new Error(
        '--replica makes a standby of the private database; with DATABASE_URL set DATABASE_READ_URL instead.',
      );
    replica = await ensureReplica(pg, { log: prefixedLog('postgres-standby') });
    env.DATABASE_READ_URL = replica.url;
  }

  if (!process.env.SMTP_URL) {
    if ((await portInUse(smtpPort)) || (await portInUse(mailHttpPort))) {
      throw new Error(
        `The fake mail server's ports ${smtpPort}/${mailHttpPort} are in use. Set FAKE_SMTP_PORT and FAKE_MAIL_HTTP_PORT.`,
      );
    }
    mkdirSync(dataDir, { recursive: true });
    const mail = supervise('mail', TSX, ['server/cli/fake-mail.ts'], {
      env: {
        ...env,
        FAKE_SMTP_PORT: String(smtpPort),
        FAKE_MAIL_HTTP_PORT: String(mailHttpPort),
        FAKE_MAIL_STORE: join(dataDir, 'mailbox.jsonl'),
      },
      ready: (service) => waitForHttp(`http://127.0.0.1:${mailHttpPort}/messages`, service, 30_000),
    });
    await mail.firstStart;
    env.SMTP_URL = `smtp://127.0.0.1:${smtpPort}`;
    env.MAILBOX_URL = `http://127.0.0.1:${mailHttpPort}`;
  } else {
    env.MAILBOX_URL = process.env.MAILBOX_URL ?? '';
  }

  // Object storage for attachments: the local fake S3-compatible store unless STORAGE_ENDPOINT names one.
  if (!process.env.STORAGE_ENDPOINT) {
    if (await portInUse(storagePort)) {
      throw new Error(`The fake object store's port ${storagePort} is in use. Set FAKE_STORAGE_PORT.`);
    }
    const objects = supervise('objects', TSX, ['server/cli/fake-storage.ts'], {
      env: {
        ...env,
        FAKE_STORAGE_PORT: String(storagePort),
        FAKE_STORAGE_DIR: process.env.FAKE_STORAGE_DIR ?? join(dataDir, 'objects'),
      },
      ready: (service) => waitForHttp(`http://127.0.0.1:${storagePort}/_health`, service, 30_000),
    });
    await objects.firstStart;
    env.STORAGE_ENDPOINT = `http://127.0.0.1:${storagePort}`;
  }

  const server = supervise(
    'server',
    TSX,
    dev ? ['watch', ...API_NODE_FLAGS, 'server/main.ts'] : [...API_NODE_FLAGS, 'server/main.ts'],
    {
      env,
      ready: (service) => waitForHttp(`http://127.0.0.1:${port}/api/health`, service),
    },
  );
  await server.firstStart;
  // Further API processes on the next ports (PORT+1, …): a reverse proxy in front spreads clients over them.
  for (let i = 2; i <= scale.api; i++) {
    const extraPort = port + i - 1;
    if (await portInUse(extraPort))
      throw new Error(`Port ${extraPort} (API process ${i}) is already in use.`);
    const extra = supervise(`server-${i}`, TSX, [...API_NODE_FLAGS, 'server/main.ts'], {
      env: { ...env, PORT: String(extraPort), SEED_DEMO: 'false' },
      ready: (service) => waitForHttp(`http://127.0.0.1:${extraPort}/api/health`, service),
    });
    await extra.firstStart;
  }

  // Two worker processes: calibrations and housekeeping in one, the CPU-heavy traveler renders and
  // what-if replays in the other, so neither ever delays a result an operator is waiting for.
  const workerArgs = dev ? ['watch', 'jobs/worker.ts'] : ['jobs/worker.ts'];
  for (let i = 1; i <= scale.workers; i++) {
    supervise(i === 1 ? 'worker' : `worker-${i}`, TSX, workerArgs, {
      env: { ...env, WORKER_QUEUES: 'calibration-compute,chart-watch,housekeeping' },
    });
  }
  // Renders and replays yield the CPU to calibrations (nice 10); calibrations wait for renders that have
  // waited too long (jobs/back-pressure.ts), so travelers keep up on a saturated line.
  for (let i = 1; i <= scale.renderers; i++) {
    supervise(i === 1 ? 'renderer' : `renderer-${i}`, 'nice', ['-n', '10', TSX, ...workerArgs], {
      env: {
        ...env,
        WORKER_QUEUES: 'traveler-render,what-if-run',
        NODE_OPTIONS: [env.NODE_OPTIONS, RENDERER_NODE_OPTIONS].filter(Boolean).join(' '),
      },
    });
  }

  if (dev)
    supervise('vite', join(repoRoot, 'node_modules', '.bin', 'vite'), ['--host', '127.0.0.1'], { env });

  // Demo line: seeded through the line services on first start; the simulator's station key is kept
  // across starts while it is valid (a new one only when it was revoked or its file is missing).
  let demoStation = null;
  if (env.SEED_DEMO !== 'false') {
    const code = await runStep(TSX, ['server/cli/seed-demo.ts'], {
      ...env,
      DEMO_BASE_URL: `http://localhost:${port}`,
    });
    if (code === 0) {
      demoStation = JSON.parse(readFileSync(demoKeyFile, 'utf8')).stationName;
    } else log('the demo line could not be seeded (output above); the product runs without it');
  }

  if (build && (await build) !== 0) throw new Error('The client build failed (output above).');

  const url = dev ? 'http://localhost:5173' : `http://localhost:${port}`;
  const banner = [
    '',
    `  Phasewright is running: ${url}`,
    '',
    '  Demo sign-ins (invented people of the demo plant):',
    '    administrator  ada.admin      / demo-admin-pass',
    '    engineer       evan.engineer  / demo-engineer-pass',
    "    engineer       rosa.engineer  / demo-engineer2-pass  (reviews Evan's recipe changes)",
    '    quality        quinn.quality  / demo-quality-pass',
    '    operator       olga.operator  / demo-operator-pass   (badge OP-1001, PIN 2468)',
    '',
    ...(scale.api + scale.workers + scale.renderers > 3
      ? [
          `  Processes: ${scale.api} API (ports ${port}–${port + scale.api - 1}), ${scale.workers} compute workers, ${scale.renderers} renderers`,
        ]
      : []),
    `  Database: ${pg.external ? 'DATABASE_URL (external)' : `private PostgreSQL on 127.0.0.1:${pg.port}`}`,
    `  Attachments: ${process.env.STORAGE_ENDPOINT ? `object storage at ${process.env.STORAGE_ENDPOINT}` : `local fake object store (127.0.0.1:${storagePort}, files in .data/objects)`}`,
    ...(env.DATABASE_READ_URL
      ? [
          `  Statistics, searches and exports read from ${replica ? `the standby on 127.0.0.1:${replica.port}` : 'DATABASE_READ_URL'}`,
        ]
      : []),
    `  Mail: ${process.env.SMTP_URL ? 'SMTP_URL relay' : `local fake mail server (SMTP 127.0.0.1:${smtpPort}); see Admin → Outbox`}`,
    ...(demoStation
      ? [
          `  Demo station: ${demoStation} (Line 2); its key is in ${relative(repoRoot, demoKeyFile) || demoKeyFile}.`,
          '  Simulate it in another terminal: npm run station:sim -- --units 50 --json',
        ]
      : []),
    '  A process that stops is started again; press Ctrl-C to stop everything.',
    '',
  ];
  writeState();
  process.stdout.write(banner.join('\n') + '\n');
} catch (e) {
  log(`failed: ${e instanceof Error ? e.message : String(e)}`);
  await shutdown(1);
}
