// Over ~350 lines on purpose: the station simulator's whole client (HTTP with retries, the protocol's
// steps, the operator's pace) is one small program a station integrator can read top to bottom.
import http from 'node:http';
import https from 'node:https';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { Measurement } from '#shared/schemas/measurement';
import type { QualificationRunView, QualificationState, StudyNextStep } from '#shared/schemas/qualification';
import { createRng } from '#shared/simulation/rng';
import type { DemoModel, DemoRig } from './demo-line.scenario';
import { calibrationBlockChecksum, drawUnit, referenceUnitTruth, simulateRun } from './demo-physics';

/**
 * A test station's side of the station protocol over HTTP, and a simulated station that drives it
 * like a rig on the line: spin a unit, post its timings, wait for the result, program and confirm a
 * pass, retest a fail while the recipe allows. Used by `npm run station:sim` and the line benchmark.
 */

export class StationHttpError extends Error {
  constructor(
    message: string,
    readonly status: number | null,
    readonly code: string | null,
  ) {
    super(message);
  }
}

interface ErrorBody {
  error?: { code?: string; message?: string };
}

/** Statuses a station retries: the server or its database is restarting, or a proxy in between is. */
const RETRYABLE = new Set([500, 502, 503, 504]);

export interface StationRetryPolicy {
  /** How long one call keeps retrying before it gives up (0 = no retries). */
  retryForMs: number;
  /** First pause between tries; it doubles up to `maxDelayMs`. */
  firstDelayMs: number;
  maxDelayMs: number;
}

/**
 * A station retries every call that got no answer or a 5xx, with a growing pause, for a while
 * (a minute by default): posting the same measurement again is safe (the same id with the same body
 * stores nothing new and answers as the first time), so a restart of the server, the worker or the
 * database costs a station a delay, never a unit. Answers a retry cannot change (4xx) are not retried.
 */
export const DEFAULT_STATION_RETRY: StationRetryPolicy = {
  retryForMs: 60_000,
  firstDelayMs: 250,
  maxDelayMs: 4000,
};

export class StationHttp {
  /** Calls that were tried again at least once (a count for reports). */
  retries = 0;

  constructor(
    readonly baseUrl: string,
    private readonly key: string,
    private readonly retry: StationRetryPolicy = DEFAULT_STATION_RETRY,
  ) {}

  private async call<T>(method: string, path: string, body?: unknown, timeoutMs = 35_000): Promise<T> {
    const giveUpAt = Date.now() + this.retry.retryForMs;
    let delay = this.retry.firstDelayMs;
    let retried = false;
    for (;;) {
      try {
        return await this.once<T>(method, path, body, timeoutMs);
      } catch (e) {
        const retryable = e instanceof StationHttpError && (e.status === null || RETRYABLE.has(e.status));
        if (!retryable || Date.now() + delay > giveUpAt) throw e;
        if (!retried) this.retries++;
        retried = true;
        await new Promise((r) => setTimeout(r, delay));
        delay = Math.min(this.retry.maxDelayMs, delay * 2);
      }
    }
  }

  // node:http with a keep-alive agent of its own, not fetch: a simulated station is a small client, and fetch's
  // streams, headers objects and abort signals cost several times the CPU per call. In the line benchmark the
  // stations share the machine with the product they measure, so their cost is taken from the product.
  // Idle kept sockets are unreferenced by node, so a finished simulation's process still exits.
  private readonly agents = {
    'http:': new http.Agent({ keepAlive: true, maxSockets: 4 }),
    'https:': new https.Agent({ keepAlive: true, maxSockets: 4 }),
  };

  private once<T>(method: string, path: string, body: unknown, timeoutMs: number): Promise<T> {
    const url = new URL(path, this.baseUrl);
    const payload = body === undefined ? undefined : Buffer.from(JSON.stringify(body));
    const noAnswer = (cause: string) =>
      new StationHttpError(`${method} ${path}: no answer from ${this.baseUrl} (${cause})`, null, null);
    return new Promise<T>((resolve, reject) => {
      const client = url.protocol === 'https:' ? https : http;
      const req = client.request(
        url,
        {
          method,
          agent: this.agents[url.protocol as 'http:' | 'https:'],
          headers: {
            'x-station-key': this.key,
            ...(payload === undefined
              ? {}
              : { 'content-type': 'application/json', 'content-length': payload.length }),
          },
        },
        (res) => {
          const chunks: Buffer[] = [];
          res.on('data', (c: Buffer) => chunks.push(c));
          res.on('error', (e: NodeJS.ErrnoException) => fail(noAnswer(e.code ?? e.name)));
          res.on('end', () => {
            clearTimeout(timer);
            const text = Buffer.concat(chunks).toString('utf8');
            const status = res.statusCode ?? 0;
            if (status < 200 || status > 299) {
              let parsed: ErrorBody = {};
              try {
                parsed = JSON.parse(text) as ErrorBody;
              } catch {
                // not JSON: report the status alone
              }
              return reject(
                new StationHttpError(
                  `${method} ${path}: ${status} ${parsed.error?.code ?? ''} ${parsed.error?.message ?? text.slice(0, 200)}`.trim(),
                  status,
                  parsed.error?.code ?? null,
                ),
              );
            }
            try {
              resolve(JSON.parse(text) as T);
            } catch (e) {
              reject(e);
            }
          });
        },
      );
      const fail = (e: StationHttpError) => {
        clearTimeout(timer);
        req.destroy();
        reject(e);
      };
      const timer = setTimeout(() => fail(noAnswer('TimeoutError')), timeoutMs);
      req.on('error', (e: NodeJS.ErrnoException) => fail(noAnswer(e.code ?? e.name)));
      req.end(payload);
    });
  }

  heartbeat() {
    return this.call<{ stationId: string; stationName: string; at: string }>(
      'POST',
      '/api/station/heartbeat',
    );
  }

  post(m: Measurement) {
    return this.call<{ measurementId: string; status: 'queued' | 'computed'; resultUrl: string }>(
      'POST',
      '/api/station/measurements',
      m,
    );
  }

  /** Long-polls until the calibration commits or `timeoutMs` passes. */
  async result(resultUrl: string, timeoutMs = 30_000): Promise<CalibrationView | null> {
    const deadline = Date.now() + timeoutMs;
    for (;;) {
      const waitMs = Math.max(0, Math.min(10_000, deadline - Date.now()));
      const r = await this.call<{ status: string; calibration: CalibrationView | null }>(
        'GET',
        `${resultUrl}?waitMs=${waitMs}`,
      );
      if (r.calibration) return r.calibration;
      if (Date.now() >= deadline) return null;
    }
  }

  /** This station's qualification state (locked or not, which reference units qualify it). */
  qualification() {
    return this.call<QualificationState>('GET', '/api/station/qualification');
  }

  /** Posts a reading of a reference unit; the answer carries its verdict and the station's new state. */
  postReading(m: Measurement) {
    return this.call<{ run: QualificationRunView; state: QualificationState; repeated: boolean }>(
      'POST',
      '/api/station/qualification-readings',
      m,
    );
  }

  /** The next trial of each open gauge study this station (or its operator) is an appraiser of. */
  studySteps() {
    return this.call<{ steps: StudyNextStep[] }>('GET', '/api/station/gauge-studies/next').then(
      (b) => b.steps,
    );
  }

  /** Posts a gauge-study trial. */
  postStudyReading(studyId: string, m: Measurement) {
    return this.call<{ reading: { serial: string; trial: number; offsetDeg: number }; finished: boolean }>(
      'POST',
      `/api/station/gauge-studies/${encodeURIComponent(studyId)}/readings`,
      { measurement: m },
    );
  }

  confirm(measurementId: string, body: { writtenCounts: number; readBackCounts: number; checksum?: string }) {
    return this.call<{ matches: boolean }>(
      'POST',
      `/api/station/measurements/${encodeURIComponent(measurementId)}/programming`,
      body,
    );
  }
}

export interface StationSimOptions {
  http: StationHttp;
  model: DemoModel;
  rig: DemoRig;
  units: number;
  /** Largest measurement posts per second (retests included); 0 = no limit. */
  ratePerSecond: number;
  /** Units in the rig at the same time. */
  concurrency: number;
  seed: number;
  /** Share of units with a fault (default 3 %). */
  badRate?: number;
  serialPrefix: string;
  /** How long to wait for a posted measurement's result before counting the unit as lost (default 30 s). */
  resultTimeoutMs?: number;
  /** Stop starting new posts once this many have been made by all simulators sharing `budget`. */
  budget?: { left: number };
  onError?: (message: string) => void;
  /** Told about each reference reading the station takes when the server says it must qualify first. */
  onQualified?: (run: QualificationRunView) => void;
}

export interface StationSimReport {
  posted: number;
  /** Units whose calibration came back (pass or fail). */
  calibrated: number;
  /** Units that ended with a passing calibration (programmed and confirmed). */
  passed: number;
  /** Units that used up the recipe's attempts without a pass (the server puts them on hold). */
  failed: number;
  /**
   * Units the server put on hold before their attempts ran out (sent to repair): a retest is refused with
   * 409 units.on_hold, and the station stops measuring that unit, as an operator would.
   */
  held: number;
  errors: number;
  /** Post → result times, ms, in the order they completed. */
  latenciesMs: number[];
  /**
   * The same cycles by step, ms: the post answered, then the result arrived, then the confirmation of a
   * pass answered (benchmarks read where a unit's time goes).
   */
  stepsMs: { post: number[]; result: number[]; confirm: number[] };
  /** Reference readings taken because the station was locked (overdue or failed). */
  qualifications: number;
}

/**
 * Measures a reference unit once at a station, as a rig does when the operator scans it: the unit's
 * physics comes from its serial (the same motor the demo seed certified), the rig's from `rig`.
 */
export async function measureReferenceUnit(
  http: StationHttp,
  model: DemoModel,
  rig: DemoRig,
  serial: string,
  rng: ReturnType<typeof createRng>,
) {
  const m = simulateRun(model, referenceUnitTruth(model, serial), { rig, attempt: 2 }, rng, {
    measurementId: crypto.randomUUID(),
    serial,
  });
  return http.postReading(m);
}

/** A pacer shared by all posts of a simulator: at most `rate` starts per second. */
function pacer(rate: number) {
  let next = 0;
  return async () => {
    if (rate <= 0) return;
    const now = performance.now();
    const at = Math.max(now, next);
    next = at + 1000 / rate;
    if (at > now) await new Promise((r) => setTimeout(r, at - now));
  };
}

/** The first measurement of some of a simulator's units, made ahead (see `prepareStationSim`). */
interface PreparedRuns {
  truths: ReturnType<typeof drawUnit>[];
  first: Map<number, { rng: ReturnType<typeof createRng>; m: Measurement }>;
}

function unitTruths(o: StationSimOptions) {
  const unitRng = createRng(o.seed);
  return Array.from({ length: o.units }, () => drawUnit(o.model, unitRng, { badRate: o.badRate ?? 0.03 }));
}

const unitRngOf = (o: StationSimOptions, index: number) =>
  createRng((o.seed * 7919 + index * 104729 + 1) >>> 0);
const unitSerialOf = (o: StationSimOptions, index: number) =>
  `${o.serialPrefix}-${String(index + 1).padStart(5, '0')}`;

/**
 * A simulator whose first `units` units have their first measurement made now, before `run` is called
 * (the same measurements `runStationSim` would make). For benchmarks: making a measurement costs the
 * simulator a few milliseconds of CPU, which a real station spends on its own machine, and dozens of
 * simulators in one process otherwise stall each other's requests while they make them.
 */
export function prepareStationSim(o: StationSimOptions, units: number) {
  const truths = unitTruths(o);
  const first = new Map<number, { rng: ReturnType<typeof createRng>; m: Measurement }>();
  for (let index = 0; index < Math.min(units, o.units); index++) {
    const rng = unitRngOf(o, index);
    const m = simulateRun(o.model, truths[index], { rig: o.rig, attempt: 1 }, rng, {
      measurementId: crypto.randomUUID(),
      serial: unitSerialOf(o, index),
    });
    first.set(index, { rng, m });
  }
  return { run: () => runStationSim(o, { truths, first }) };
}

/** Runs one simulated station over `units` units and reports what happened. */
export async function runStationSim(
  o: StationSimOptions,
  prepared?: PreparedRuns,
): Promise<StationSimReport> {
  const report: StationSimReport = {
    posted: 0,
    calibrated: 0,
    passed: 0,
    failed: 0,
    held: 0,
    errors: 0,
    latenciesMs: [],
    stepsMs: { post: [], result: [], confirm: [] },
    qualifications: 0,
  };
  const pace = pacer(o.ratePerSecond);
  // A locked station (423) measures its reference unit once, however many units were waiting, then goes on.
  const qualifyRng = createRng((o.seed * 31 + 17) >>> 0);
  let qualifying: Promise<boolean> | null = null;
  const qualify = () =>
    (qualifying ??= (async () => {
      try {
        const state = await o.http.qualification();
        const serial = state.referenceSerials[0];
        if (!serial) return false;
        const out = await measureReferenceUnit(o.http, o.model, o.rig, serial, qualifyRng);
        report.qualifications++;
        o.onQualified?.(out.run);
        return !out.state.locked;
      } finally {
        qualifying = null;
      }
    })());
  const postUnlocked = async (m: Measurement) => {
    for (let tries = 0; ; tries++) {
      try {
        return await o.http.post(m);
      } catch (e) {
        if (!(e instanceof StationHttpError && e.status === 423) || tries >= 2 || !(await qualify())) throw e;
      }
    }
  };
  const truths = prepared?.truths ?? unitTruths(o);
  let next = 0;

  const runUnit = async (index: number) => {
    const made = prepared?.first.get(index);
    const rng = made?.rng ?? unitRngOf(o, index);
    const serial = unitSerialOf(o, index);
    let gotResult = false;
    for (let run = 1; run <= o.model.recipe.maxAttempts + 2; run++) {
      if (o.budget) {
        if (o.budget.left <= 0) break;
        o.budget.left--;
      }
      await pace();
      const m =
        run === 1 && made
          ? made.m
          : simulateRun(o.model, truths[index], { rig: o.rig, attempt: run }, rng, {
              measurementId: crypto.randomUUID(),
              serial,
            });
      try {
        const t0 = performance.now();
        const accepted = await postUnlocked(m);
        report.posted++;
        const t1 = performance.now();
        report.stepsMs.post.push(t1 - t0);
        const waitMs = o.resultTimeoutMs ?? 30_000;
        const cal = await o.http.result(accepted.resultUrl, waitMs);
        if (!cal) throw new StationHttpError(`${serial}: no result within ${waitMs / 1000} s`, null, null);
        const t2 = performance.now();
        report.latenciesMs.push(t2 - t0);
        report.stepsMs.result.push(t2 - t1);
        if (cal.verdict === 'unusable') continue;
        gotResult = true;
        if (cal.verdict === 'pass' && cal.offsetCounts !== null) {
          await o.http.confirm(m.measurementId, {
            writtenCounts: cal.offsetCounts,
            readBackCounts: cal.offsetCounts,
            checksum: calibrationBlockChecksum(serial, cal.offsetCounts),
          });
          report.stepsMs.confirm.push(performance.now() - t2);
          report.passed++;
          break;
        }
        if ((cal.attempt ?? 0) >= cal.maxAttempts) {
          report.failed++;
          break;
        }
      } catch (e) {
        if (e instanceof StationHttpError && e.status === 409 && e.code === 'units.on_hold') {
          report.held++;
          break;
        }
        report.errors++;
        o.onError?.(e instanceof Error ? e.message : String(e));
        break;
      }
    }
    if (gotResult) report.calibrated++;
  };

  await Promise.all(
    Array.from({ length: Math.max(1, Math.min(o.concurrency, o.units)) }, async () => {
      while (next < o.units) await runUnit(next++);
    }),
  );
  return report;
}

/** Nearest-rank percentile of a list of numbers (0 for an empty list). */
export function percentile(values: number[], p: number): number {
  if (values.length === 0) return 0;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))];
}

/**
 * Works through this station's share of every open gauge study, step by step in the planned order: each
 * part's physics comes from its serial (as for reference units), the rig's from `rig`. Returns the trials posted.
 */
export async function runStudyTrials(
  http: StationHttp,
  model: DemoModel,
  rig: DemoRig,
  seed: number,
  onTrial?: (line: string) => void,
): Promise<number> {
  const rng = createRng(seed);
  let posted = 0;
  for (;;) {
    const step = (await http.studySteps()).find((s) => s.serial !== null);
    if (!step) return posted;
    const m = simulateRun(model, referenceUnitTruth(model, step.serial!), { rig, attempt: 2 }, rng, {
      measurementId: crypto.randomUUID(),
      serial: step.serial!,
    });
    const out = await http.postStudyReading(step.studyId, m);
    posted++;
    onTrial?.(
      `${step.studyName}: ${out.reading.serial} trial ${out.reading.trial} of ${step.trials}: ${out.reading.offsetDeg.toFixed(3)}°${out.finished ? ' (study finished)' : ''}`,
    );
  }
}
