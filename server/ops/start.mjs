// `npm start`: installs what is missing, starts the private PostgreSQL, the local fake mail server,
// the API + client server and the job worker, seeds the demo on first run, and on Ctrl-C stops
// everything it started. `--dev` serves the client from Vite's dev server with reload instead.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { ensureDeps } from './ensure-deps.mjs';
import { ensurePostgres } from './pg-local.mjs';
import { prefixedLog, repoRoot } from './proc.mjs';
import { TSX, portInUse, runStep, startService, waitForHttp } from './services.mjs';

const log = prefixedLog('start');
const dev = process.argv.includes('--dev');
const port = Number(process.env.PORT ?? 3000);
const smtpPort = Number(process.env.FAKE_SMTP_PORT ?? 2525);
const mailHttpPort = Number(process.env.FAKE_MAIL_HTTP_PORT ?? 2580);
const dataDir = join(repoRoot, '.data');

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
let shuttingDown = false;

async function shutdown(code) {
  if (shuttingDown) return;
  shuttingDown = true;
  log('stopping…');
  for (const s of [...services].reverse()) await s.stop();
  if (pg?.startedByUs) {
    await pg.stop();
    log('PostgreSQL stopped');
  }
  process.exit(code);
}
process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

function onUnexpectedExit(name) {
  return (code) => {
    log(`${name} exited unexpectedly (code ${code}); stopping everything`);
    void shutdown(1);
  };
}

try {
  await ensureDeps({ log: prefixedLog('deps') });
  if (await portInUse(port)) {
    throw new Error(
      `Port ${port} is already in use. Stop what uses it, or choose another: PORT=3100 npm start`,
    );
  }
  pg = await ensurePostgres({ instance: 'dev', log: prefixedLog('postgres') });

  const env = {
    ...process.env,
    NODE_ENV: dev ? 'development' : 'production',
    DATABASE_URL: pg.url,
    PORT: String(port),
    SESSION_SECRET: sessionSecret(),
    SEED_DEMO: process.env.SEED_DEMO ?? 'true',
  };

  if (!process.env.SMTP_URL) {
    if ((await portInUse(smtpPort)) || (await portInUse(mailHttpPort))) {
      throw new Error(
        `The fake mail server's ports ${smtpPort}/${mailHttpPort} are in use. Set FAKE_SMTP_PORT and FAKE_MAIL_HTTP_PORT.`,
      );
    }
    mkdirSync(dataDir, { recursive: true });
    const mail = startService('mail', TSX, ['server/cli/fake-mail.ts'], {
      env: {
        ...env,
        FAKE_SMTP_PORT: String(smtpPort),
        FAKE_MAIL_HTTP_PORT: String(mailHttpPort),
        FAKE_MAIL_STORE: join(dataDir, 'mailbox.jsonl'),
      },
      onExit: onUnexpectedExit('mail'),
    });
    services.push(mail);
    await waitForHttp(`http://127.0.0.1:${mailHttpPort}/messages`, mail, 30_000);
    env.SMTP_URL = `smtp://127.0.0.1:${smtpPort}`;
    env.MAILBOX_URL = `http://127.0.0.1:${mailHttpPort}`;
  } else {
    env.MAILBOX_URL = process.env.MAILBOX_URL ?? '';
  }

  if (!dev) {
    log('building the client…');
    const code = await runStep(join(repoRoot, 'node_modules', '.bin', 'vite'), [
      'build',
      '--logLevel',
      'warn',
    ]);
    if (code !== 0) throw new Error('The client build failed (output above).');
  }

  const server = startService('server', TSX, dev ? ['watch', 'server/main.ts'] : ['server/main.ts'], {
    env,
    onExit: onUnexpectedExit('server'),
  });
  services.push(server);
  await waitForHttp(`http://127.0.0.1:${port}/api/health`, server);

  // Two worker processes: calibrations and housekeeping in one, the CPU-heavy traveler renders in the
  // other, so a burst of renders never delays a result an operator is waiting for.
  const workerArgs = dev ? ['watch', 'jobs/worker.ts'] : ['jobs/worker.ts'];
  services.push(
    startService('worker', TSX, workerArgs, {
      env: { ...env, WORKER_QUEUES: 'calibration-compute,chart-watch,housekeeping' },
      onExit: onUnexpectedExit('worker'),
    }),
    // Renders yield the CPU to calibrations (nice 10) and catch up when the line is quieter.
    startService('renderer', 'nice', ['-n', '10', TSX, ...workerArgs], {
      env: { ...env, WORKER_QUEUES: 'traveler-render' },
      onExit: onUnexpectedExit('renderer'),
    }),
  );

  if (dev) {
    const vite = startService(
      'vite',
      join(repoRoot, 'node_modules', '.bin', 'vite'),
      ['--host', '127.0.0.1'],
      {
        env,
        onExit: onUnexpectedExit('vite'),
      },
    );
    services.push(vite);
  }

  // Demo line: seeded through the line services on first start; a fresh simulator key every start.
  let demoStation = null;
  if (env.SEED_DEMO !== 'false') {
    const code = await runStep(TSX, ['server/cli/seed-demo.ts'], {
      ...env,
      DEMO_BASE_URL: `http://localhost:${port}`,
    });
    if (code === 0) {
      demoStation = JSON.parse(readFileSync(join(dataDir, 'demo-station-key.json'), 'utf8')).stationName;
    } else log('the demo line could not be seeded (output above); the product runs without it');
  }

  const url = dev ? 'http://localhost:5173' : `http://localhost:${port}`;
  const banner = [
    '',
    `  Phasewright is running: ${url}`,
    '',
    '  Demo sign-ins (invented people of the demo plant):',
    '    administrator  ada.admin      / demo-admin-pass',
    '    engineer       evan.engineer  / demo-engineer-pass',
    '    quality        quinn.quality  / demo-quality-pass',
    '    operator       olga.operator  / demo-operator-pass   (badge OP-1001, PIN 2468)',
    '',
    `  Database: ${pg.external ? 'DATABASE_URL (external)' : `private PostgreSQL on 127.0.0.1:${pg.port}`}`,
    `  Mail: ${process.env.SMTP_URL ? 'SMTP_URL relay' : `local fake mail server (SMTP 127.0.0.1:${smtpPort}); see Admin → Outbox`}`,
    ...(demoStation
      ? [
          `  Demo station: ${demoStation} (Line 2); its key is in .data/demo-station-key.json.`,
          '  Simulate it in another terminal: npm run station:sim -- --units 50 --json',
        ]
      : []),
    '  Press Ctrl-C to stop everything.',
    '',
  ];
  process.stdout.write(banner.join('\n') + '\n');
} catch (e) {
  log(`failed: ${e instanceof Error ? e.message : String(e)}`);
  await shutdown(1);
}
