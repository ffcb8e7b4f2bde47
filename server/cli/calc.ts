// Offline calibration: runs the engine on a measurement (JSON) or a sampled capture (CSV) with a recipe.
// Prints the result JSON (or a table) on stdout; exit 0 when a result was computed (pass or fail),
// 2 for unusable input or arguments (reason on stderr), 1 for anything unexpected. No database needed.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { extname, join, resolve } from 'node:path';
import { calibrate, CalibrationInputError } from '#shared/calibration/index';
import { calibrateCapture } from '#shared/capture/capture';
import type { CalibrationResult } from '#shared/schemas/calibration-result';
import { exampleCaptureCsv, exampleMeasurement, exampleRecipe } from '#shared/simulation/examples';

const USAGE = `Usage:
  npm run -s calc -- --recipe recipe.json measurement.json|capture.csv [--format json|table]
                     [--direction forward|reverse] [--serial S] [--measurement-id ID]
  npm run -s calc -- --example DIR    write a sample recipe.json, measurement.json and capture.csv to DIR

A measurement is the station's JSON (segments with hall edges and back-EMF crossings, µs).
A capture is a CSV with time_s, va,vb,vc (or vab,vbc,vca) and ha,hb,hc; --direction applies to captures
(default: taken from the hall sequence).`;

class UsageError extends Error {}

interface Args {
  recipe?: string;
  input?: string;
  format: 'json' | 'table';
  direction?: 'forward' | 'reverse';
  serial?: string;
  measurementId?: string;
  example?: string;
  help: boolean;
}

function parseArgs(argv: string[]): Args {
  const args: Args = { format: 'json', help: false };
  const positional: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const value = () => {
      const v = argv[++i];
      if (v === undefined || v.startsWith('--')) throw new UsageError(`${a} needs a value`);
      return v;
    };
    if (a === '--recipe') args.recipe = value();
    else if (a === '--format') {
      const f = value();
      if (f !== 'json' && f !== 'table') throw new UsageError(`--format must be json or table, not "${f}"`);
      args.format = f;
    } else if (a === '--direction') {
      const d = value();
      if (d !== 'forward' && d !== 'reverse')
        throw new UsageError(`--direction must be forward or reverse, not "${d}"`);
      args.direction = d;
    } else if (a === '--serial') args.serial = value();
    else if (a === '--measurement-id') args.measurementId = value();
    else if (a === '--example') args.example = value();
    else if (a === '--help' || a === '-h') args.help = true;
    else if (a.startsWith('--')) throw new UsageError(`unknown option ${a}`);
    else positional.push(a);
  }
  if (positional.length > 1) throw new UsageError(`one input file at a time (got ${positional.length})`);
  args.input = positional[0];
  return args;
}

function readText(path: string, what: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(
      `cannot read the ${what} ${path}${code === 'ENOENT' ? ': no such file' : `: ${code ?? String(e)}`}`,
    );
  }
}

function readBytes(path: string, what: string): Uint8Array {
  try {
    return readFileSync(path);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(
      `cannot read the ${what} ${path}${code === 'ENOENT' ? ': no such file' : `: ${code ?? String(e)}`}`,
    );
  }
}

function readJson(path: string, what: string): unknown {
  const text = readText(path, what);
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new UsageError(`the ${what} ${path} is not valid JSON: ${(e as Error).message}`);
  }
}

const n = (x: number | null | undefined, d = 2) => (x === null || x === undefined ? '—' : x.toFixed(d));

function table(r: CalibrationResult): string {
  const lines: string[] = [];
  lines.push(`Unit ${r.serial}   measurement ${r.measurementId}   engine ${r.engineVersion}`);
  lines.push(`Verdict: ${r.verdict.toUpperCase()}`);
  lines.push(
    `Offset ${n(r.offsetDeg, 3)}° e  (${r.offsetCounts ?? '—'} counts)` +
      (r.lagDeg !== null ? `   lag ${n(r.lagDeg, 3)}°` : ''),
  );
  if (r.hysteresisDeg !== null || r.latencyUs !== null)
    lines.push(`Hysteresis ${n(r.hysteresisDeg, 3)}°   latency ${n(r.latencyUs, 2)} µs`);
  lines.push(
    `Speed ${n(r.speedRpm, 0)} rpm (${n(r.electricalHz, 1)} Hz e), variation ${n(r.speedVariationPct, 1)} %, ${n(r.electricalTurns, 1)} turns, fit residual ${n(r.fitResidualDeg, 3)}°`,
  );
  lines.push('', 'Segment  direction  offset°   rpm     turns  fit°');
  for (const s of r.segments) {
    lines.push(
      `${String(s.index).padEnd(8)} ${s.direction.padEnd(10)} ${n(s.offsetDeg, 3).padStart(7)}  ${n(s.speedRpm, 0).padStart(6)}  ${n(s.electricalTurns, 1).padStart(6)}  ${n(s.fitResidualDeg, 3)}`,
    );
  }
  lines.push('', 'Edge     count  residual°  spread°');
  for (const e of r.edges) {
    lines.push(
      `${`${e.sensor} ${e.edge}`.padEnd(8)} ${String(e.count).padStart(5)}  ${n(e.residualDeg, 3).padStart(9)}  ${n(e.spreadDeg, 3).padStart(7)}`,
    );
  }
  lines.push('', 'Sensor  duty %  placement°');
  for (const s of r.sensors)
    lines.push(`${s.sensor.padEnd(7)} ${n(s.dutyPct, 2).padStart(6)}  ${n(s.placementDeg, 3).padStart(9)}`);
  if (r.drive) {
    lines.push(
      '',
      `Uncorrected: torque ${n(100 * r.drive.torqueFactor, 2)} %, d-axis share ${n(100 * r.drive.dAxisShare, 2)} %, six-step ripple ${n(r.drive.sixStepRippleMeasuredPct, 1)} % (ideal ${n(r.drive.sixStepRippleIdealPct, 1)} %)`,
    );
  }
  if (r.capture) {
    const c = r.capture;
    lines.push(
      `Back-EMF: Ke ${n(c.keVPerKrpmPeak, 3)} V/krpm peak (${n(c.keVPerKrpmRms, 3)} RMS), THD ${c.thdPct.map((x) => n(x, 2)).join(' / ')} %, imbalance ${n(c.amplitudeImbalancePct, 2)} % / ${n(c.spacingImbalanceDeg, 2)}°`,
    );
  }
  lines.push('', 'Checks');
  for (const c of r.checks) lines.push(`  ${c.passed ? 'ok  ' : 'FAIL'} ${c.code.padEnd(26)} ${c.message}`);
  return lines.join('\n');
}

function writeExamples(dir: string): void {
  const target = resolve(dir);
  mkdirSync(target, { recursive: true });
  writeFileSync(join(target, 'recipe.json'), `${JSON.stringify(exampleRecipe(), null, 2)}\n`);
  writeFileSync(join(target, 'measurement.json'), `${JSON.stringify(exampleMeasurement(), null, 2)}\n`);
  writeFileSync(join(target, 'capture.csv'), exampleCaptureCsv());
  process.stdout.write(
    `Wrote recipe.json, measurement.json and capture.csv to ${target}\nTry: npm run -s calc -- --recipe ${join(target, 'recipe.json')} ${join(target, 'measurement.json')} --format table\n`,
  );
}

function main(argv: string[]): number {
  let args: Args;
  try {
    args = parseArgs(argv);
    if (args.help) {
      process.stdout.write(`${USAGE}\n`);
      return 0;
    }
    if (args.example) {
      writeExamples(args.example);
      return 0;
    }
    if (!args.recipe) throw new UsageError('--recipe recipe.json is required');
    if (!args.input) throw new UsageError('give a measurement (.json) or a capture (.csv) to calculate');
    const recipe = readJson(args.recipe, 'recipe');
    let result: CalibrationResult;
    if (extname(args.input).toLowerCase() === '.csv') {
      // Bytes, not text: the capture reader works on UTF-8 bytes directly.
      const text = readBytes(args.input, 'capture');
      result = calibrateCapture(text, recipe as never, {
        direction: args.direction,
        serial: args.serial,
        measurementId: args.measurementId,
      }).result;
    } else {
      const measurement = readJson(args.input, 'measurement');
      result = calibrate(measurement as never, recipe as never);
    }
    process.stdout.write(
      args.format === 'table' ? `${table(result)}\n` : `${JSON.stringify(result, null, 2)}\n`,
    );
    return 0;
  } catch (e) {
    if (e instanceof CalibrationInputError) {
      process.stderr.write(
        `calc: unusable input (${e.issues.length} problem${e.issues.length === 1 ? '' : 's'}):\n`,
      );
      for (const i of e.issues) process.stderr.write(`  ${i.path}: ${i.message}\n`);
      return 2;
    }
    if (e instanceof UsageError) {
      process.stderr.write(`calc: ${e.message}\n\n${USAGE}\n`);
      return 2;
    }
    process.stderr.write(
      `calc: unexpected failure: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}\n`,
    );
    return 1;
  }
}

process.exitCode = main(process.argv.slice(2));
