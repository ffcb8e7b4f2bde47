// A simulated end-of-line test station: spins units (the shared physical simulator makes their hall
// and back-EMF timings), posts each measurement with its station key, waits for the result, programs
// and confirms passes, retests fails up to the recipe's attempts. Exit 0 when nothing went wrong
// with the protocol (failing units are not errors), 1 on errors, 2 on bad arguments or setup.
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { DEMO_MODELS, DEMO_STATIONS, demoModel, type DemoRig } from '../modules/demo/demo-line.scenario';
import { referenceSerial } from '../modules/demo/demo-physics';
import { createRng } from '#shared/simulation/rng';
import {
  measureReferenceUnit,
  percentile,
  runStationSim,
  runStudyTrials,
  StationHttp,
  StationHttpError,
} from '../modules/demo/station-client';
import { demoSettings } from '../env';
import { formatSignedDeg } from '#shared/wording';

const USAGE = `Usage:
  npm run station:sim -- --units N [--rate R] [--concurrency C] [--seed S] [--json]
                         [--base-url http://localhost:3000] [--key KEY] [--model CV-57B|CV-86S]
                         [--bad-rate 0.03] [--serial-prefix P]

  npm run station:sim -- --mode reference [--readings N] [--seed S] [--key KEY]
                         measure the station's reference unit N times (default 1) and print each reading

  npm run station:sim -- --mode study [--seed S] [--key KEY]
                         take this station's trials of every open gauge study, in the planned order

  --mode M          production (default), reference or study
  --units N         units to test (default 20)
  --rate R          largest measurement posts per second, retests included (default 10; 0 = no limit)
  --concurrency C   units in the rig at the same time (default 2)
  --seed S          seed of the units' physics (default: from the clock)
  --json            print one JSON object at the end:
                    { posted, calibrated, passed, failed, held, errors, qualifications, latencyMs: { p50, p95, max } }
                    posted = measurements posted (retests included); calibrated = units whose
                    calibration came back; passed/failed = units that ended with a pass / with the
                    recipe's attempts used up (on hold); held = units put on hold earlier (sent to
                    repair), not retested; errors = protocol or connection errors;
                    latencyMs = post → result; qualifications = reference readings taken because
                    the server refused production until the station was qualified (423).
  --key KEY         the station key (default: the demo station key npm start writes to
                    .data/demo-station-key.json)
  --model CODE      the motor model the station tests (default: the demo station's model)
  --bad-rate F      share of units with a fault: magnet ring rotated, dead hall sensor, or poorly
                    seated on the first attempt (default 0.03)`;

const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
// The same file `npm start` keeps the demo key in (DEMO_KEY_FILE moves it for both).
const KEY_FILE = demoSettings().DEMO_KEY_FILE ?? join(repoRoot, '.data', 'demo-station-key.json');

class SetupError extends Error {
  constructor(
    message: string,
    readonly showUsage = false,
  ) {
    super(message);
  }
}

function numberArg(name: string, raw: string | undefined, fallback: number, min: number, max: number) {
  if (raw === undefined) return fallback;
  const v = Number(raw);
  if (!Number.isFinite(v) || v < min || v > max) {
    throw new SetupError(`--${name} must be a number from ${min} to ${max} (got "${raw}").`, true);
  }
  return v;
}

interface KeyFile {
  stationId: string;
  stationName: string;
  modelCode?: string;
  key: string;
  baseUrl?: string;
}

function readKeyFile(): KeyFile {
  if (!existsSync(KEY_FILE)) {
    throw new SetupError(
      `No demo station key: ${KEY_FILE} does not exist. Run \`npm start\` first (it seeds the demo line and writes the key), or pass --key.`,
    );
  }
  try {
    const k = JSON.parse(readFileSync(KEY_FILE, 'utf8')) as KeyFile;
    if (typeof k.key !== 'string') throw new Error('no key');
    return k;
  } catch {
    throw new SetupError(`${KEY_FILE} is unreadable; restart \`npm start\` to write it again.`);
  }
}

async function main(): Promise<number> {
  const { values } = parseArgs({
    options: {
      units: { type: 'string' },
      rate: { type: 'string' },
      concurrency: { type: 'string' },
      seed: { type: 'string' },
      json: { type: 'boolean', default: false },
      'base-url': { type: 'string' },
      key: { type: 'string' },
      model: { type: 'string' },
      'bad-rate': { type: 'string' },
      'serial-prefix': { type: 'string' },
      mode: { type: 'string' },
      readings: { type: 'string' },
      help: { type: 'boolean', default: false },
    },
    strict: true,
  });
  if (values.help) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  const units = numberArg('units', values.units, 20, 1, 1_000_000);
  if (!Number.isInteger(units)) throw new SetupError('--units must be a whole number.', true);
  const rate = numberArg('rate', values.rate, 10, 0, 100_000);
  const concurrency = Math.round(numberArg('concurrency', values.concurrency, 2, 1, 256));
  const seed = Math.round(numberArg('seed', values.seed, Date.now() % 2 ** 31, 0, 2 ** 32 - 1));
  const badRate = numberArg('bad-rate', values['bad-rate'], 0.03, 0, 1);
  const file = values.key ? null : readKeyFile();
  const key = values.key ?? file!.key;
  const baseUrl = values['base-url'] ?? file?.baseUrl ?? 'http://localhost:3000';
  const model = demoModel(values.model ?? file?.modelCode ?? 'CV-57B');
  const log = (line: string) => process.stderr.write(`${line}\n`);

  try {
    const health = await fetch(new URL('/api/health', baseUrl), { signal: AbortSignal.timeout(5000) });
    if (!health.ok) throw new Error(`health check answered ${health.status}`);
  } catch (e) {
    throw new SetupError(
      `The server at ${baseUrl} is not reachable (${(e as Error).message}). Start it with \`npm start\`, or pass --base-url.`,
    );
  }
  const http = new StationHttp(baseUrl, key);
  let stationName: string;
  try {
    stationName = (await http.heartbeat()).stationName;
  } catch (e) {
    if (e instanceof StationHttpError && e.status === 401) {
      throw new SetupError(
        `The server refused the station key (${e.code}). Restart \`npm start\` for a fresh demo key, or pass a valid --key.`,
      );
    }
    throw e;
  }
  // The rig's timing behaviour: the demo station's own, else a steady both-direction rig.
  const rig: DemoRig = DEMO_STATIONS.find((s) => s.name === stationName && s.rig.detectorDriftUs === 0)
    ?.rig ?? { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 };
  const mode = values.mode ?? 'production';
  if (mode !== 'production' && mode !== 'reference' && mode !== 'study') {
    throw new SetupError(`--mode must be production, reference or study (got "${mode}").`, true);
  }
  if (mode === 'study') {
    const n = await runStudyTrials(http, model, rig, seed, (line) => process.stdout.write(`${line}\n`));
    process.stdout.write(
      n === 0
        ? `No open gauge study has a trial for ${stationName}.\n`
        : `${n} study trials posted at ${stationName}.\n`,
    );
    return 0;
  }
  if (mode === 'reference') {
    const readings = Math.round(numberArg('readings', values.readings, 1, 1, 1000));
    const state = await http.qualification();
    const serial = state.referenceSerials[0];
    if (!serial)
      throw new SetupError(`Station ${stationName} has no reference unit in its qualification policy.`);
    const refModel = DEMO_MODELS.find((m) => referenceSerial(m.code) === serial) ?? model;
    const rng = createRng(seed);
    let failed = 0;
    for (let i = 0; i < readings; i++) {
      const out = await measureReferenceUnit(http, refModel, rig, serial, rng);
      const r = out.run;
      if (r.verdict === 'fail') failed++;
      const dev =
        r.deviationDeg === null
          ? 'no certified value yet'
          : `${formatSignedDeg(r.deviationDeg, 3)} (± ${r.toleranceDeg}°)`;
      process.stdout.write(`${serial} at ${stationName}: ${r.offsetDeg.toFixed(3)}°, ${dev}: ${r.verdict}\n`);
      if (i === readings - 1) process.stdout.write(`${out.state.sentence}\n`);
    }
    return failed > 0 ? 1 : 0;
  }
  const runTag = Date.now().toString(36).toUpperCase();
  const serialPrefix = values['serial-prefix'] ?? `${model.code.replace('-', '')}-SIM-${runTag}`;
  log(
    `station:sim: ${stationName} (${model.code}) at ${baseUrl}: ${units} units, ≤ ${rate || '∞'} posts/s, ${concurrency} at a time, seed ${seed}`,
  );

  let shown = 0;
  const t0 = performance.now();
  const report = await runStationSim({
    http,
    model,
    rig,
    units,
    ratePerSecond: rate,
    concurrency,
    seed,
    badRate,
    serialPrefix,
    onError: (message) => {
      if (shown++ < 10) log(`error: ${message}`);
    },
    onQualified: (r) =>
      log(`station locked: measured reference unit ${r.serial} (${r.offsetDeg.toFixed(3)}°): ${r.verdict}`),
  });
  const seconds = (performance.now() - t0) / 1000;
  const latencyMs = {
    p50: Math.round(percentile(report.latenciesMs, 50) * 10) / 10,
    p95: Math.round(percentile(report.latenciesMs, 95) * 10) / 10,
    max: Math.round(Math.max(0, ...report.latenciesMs) * 10) / 10,
  };
  const summary = {
    posted: report.posted,
    calibrated: report.calibrated,
    passed: report.passed,
    failed: report.failed,
    held: report.held,
    errors: report.errors,
    qualifications: report.qualifications,
    latencyMs,
  };
  if (values.json) process.stdout.write(`${JSON.stringify(summary)}\n`);
  else {
    process.stdout.write(
      [
        `${report.posted} measurements posted in ${seconds.toFixed(1)} s`,
        `${report.calibrated} of ${units} units calibrated: ${report.passed} passed, ${report.failed} failed (on hold)` +
          (report.held ? `, ${report.held} held for repair after a failed attempt (not retested)` : ''),
        `${report.errors} errors`,
        `${report.qualifications} reference reading${report.qualifications === 1 ? '' : 's'} taken to qualify the station`,
        `post → result: p50 ${latencyMs.p50} ms, p95 ${latencyMs.p95} ms, max ${latencyMs.max} ms`,
      ].join('\n') + '\n',
    );
  }
  return report.errors > 0 ? 1 : 0;
}

try {
  process.exitCode = await main();
} catch (e) {
  const argsError = (e as { code?: string }).code?.startsWith('ERR_PARSE_ARGS') ?? false;
  if (e instanceof SetupError || argsError) {
    const usage = argsError || (e as SetupError).showUsage ? `\n${USAGE}\n` : '';
    process.stderr.write(`station:sim: ${(e as Error).message}\n${usage}`);
    process.exitCode = 2;
  } else {
    process.stderr.write(`station:sim: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exitCode = 1;
  }
}
