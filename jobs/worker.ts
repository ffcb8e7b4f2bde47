import pg from 'pg';
import { createDatabase } from '#server/db/client';
import { prepared } from '#server/db/prepared';
import { parseEnv, workerSettings } from '#server/env';
import { createSmtpMailer } from '#server/modules/mail/mail.service';
import { createLogger, type Logger } from '#server/lib/logger';
import { BOSS_SCHEMA, startJobQueue, type JobQueue } from './queue-client';
import { JOBS_WAKE_CHANNEL, queues } from './queues';
import { jobRegistry } from './registry';
import { createBackPressure } from './back-pressure';
import type { WorkerDeps } from './worker-deps';

/**
 * The runs a fetched batch makes, in order: one a job, or with `coalesce` one for each distinct payload
 * (its jobs together, the first job's place deciding the order).
 */
export function runsOf<J extends { data?: unknown }>(jobs: J[], coalesce: boolean): J[][] {
  if (!coalesce) return jobs.map((j) => [j]);
  const runs = new Map<string, J[]>();
  for (const j of jobs) {
    const key = JSON.stringify(j.data ?? {});
    const run = runs.get(key);
    if (run) run.push(j);
    else runs.set(key, [j]);
  }
  return [...runs.values()];
}

/**
 * The worker process: serves every queue in the registry. Each job's payload is validated against
 * its queue schema; a job that throws (or whose outcome from a batch handler is an error) is failed alone
 * (the rest of its batch completes; the jobs of a coalesced run fail together) and pg-boss retries it with
 * the registry's policy. Producers NOTIFY on JOBS_WAKE_CHANNEL at commit, and the
 * worker wakes the matching fetch loops at once instead of waiting for the next poll.
 */
export async function startWorker(opts: {
  databaseUrl: string;
  logLevel?: string;
  logger?: Logger;
  /** Queue names to serve (default: every queue in the registry). */
  queues?: string[];
  /** Where alert e-mails go. */
  mail?: { smtpUrl: string; from: string; publicUrl: string };
}) {
  const logger = opts.logger ?? createLogger(opts.logLevel ?? 'info', 'phasewright-worker');
  const database = createDatabase(opts.databaseUrl, { max: 10, applicationName: 'phasewright-worker' });
  const queue: JobQueue = await startJobQueue(opts.databaseUrl, database.pool, {
    supervise: true,
    schedule: true,
    // A lost connection (the database restarting) is reported here; pg-boss's loops carry on polling.
    onError: (err) => logger.warn({ err: err.message }, 'job queue: database error; retrying'),
  });
  const mailer = opts.mail ? createSmtpMailer(opts.mail.smtpUrl, opts.mail.from) : undefined;
  const deps: WorkerDeps = {
    db: database.db,
    pool: database.pool,
    logger,
    clock: () => new Date(),
    queue,
    mailer,
    publicUrl: opts.mail?.publicUrl,
  };
  const loops = new Map<string, string[]>();

  const served = jobRegistry.filter((j) => !opts.queues || opts.queues.includes(queues[j.queue].name));
  for (const job of served) {
    const def = queues[job.queue];
    const other = job.yieldsTo && queues[job.yieldsTo.queue].name;
    // Jobs waiting to be fetched (created, or due for a retry): pg-boss's fetch index covers exactly these.
    const pressure =
      job.yieldsTo &&
      createBackPressure(async () => {
        const { rows } = await database.pool.query<{ queued: number; old: number }>(
          prepared(
            `select count(*)::int as queued,
                    (count(*) filter (where created_on < now() - make_interval(secs => $2 / 1000.0)))::int as old
               from ${BOSS_SCHEMA}.job where name = $1 and state < 'active'`,
            [other, job.yieldsTo!.pressure.olderThanMs],
          ),
        );
        return rows[0];
      }, job.yieldsTo.pressure);
    const ids: string[] = [];
    for (let i = 0; i < job.concurrency; i++) {
      let loopId = '';
      loopId = await queue.boss.work(
        def.name,
        { pollingIntervalSeconds: job.pollSeconds ?? 2, batchSize: job.batchSize },
        async (jobs) => {
          if (pressure) {
            const waited = await pressure.wait();
            if (waited > 0)
              logger.debug({ queue: def.name, waitedMs: Math.round(waited), for: other }, 'back-pressure');
          }
          const fail = async (j: (typeof jobs)[number], err: unknown) => {
            logger.error({ err, queue: def.name, jobId: j.id }, 'job failed');
            await queue.boss.fail(def.name, j.id, { message: (err as Error)?.message ?? String(err) });
          };
          if (job.batchHandler) {
            // A payload that does not parse fails its job alone; the rest run together.
            const valid: { j: (typeof jobs)[number]; payload: unknown }[] = [];
            for (const j of jobs) {
              const parsed = def.payload.safeParse(j.data ?? {});
              if (parsed.success) valid.push({ j, payload: parsed.data });
              else await fail(j, parsed.error);
            }
            let outcomes: unknown[];
            try {
              outcomes = valid.length
                ? await job.batchHandler(deps, valid.map((v) => v.payload) as never)
                : [];
            } catch (err) {
              outcomes = valid.map(() => err);
            }
            for (const [i, v] of valid.entries()) if (outcomes[i]) await fail(v.j, outcomes[i]);
          } else {
            for (const run of runsOf(jobs, job.coalesce ?? false)) {
              try {
                const payload = def.payload.parse(run[0].data ?? {});
                await job.handler!(deps, payload as never);
              } catch (err) {
                for (const j of run) await fail(j, err);
              }
            }
          }
          // A full batch means more may be waiting (a backlog): fetch again at once. pg-boss 10 would
          // otherwise sleep its polling interval after every batch, capping a loop at batchSize jobs
          // per 2 s once the producers' wake-ups stop.
          if (jobs.length >= job.batchSize && loopId) queue.boss.notifyWorker(loopId);
        },
      );
      ids.push(loopId);
    }
    loops.set(def.name, ids);
    if (job.schedule) await queue.boss.schedule(def.name, job.schedule, {}, { tz: 'UTC' });
  }

  // Wake-ups: one LISTEN connection; reconnects if the database restarts.
  let listener: pg.Client | null = null;
  let stopped = false;
  const gathering = new Map(
    served.filter((j) => j.gatherMs !== undefined).map((j) => [queues[j.queue].name as string, j.gatherMs!]),
  );
  const gatherTimers = new Map<string, NodeJS.Timeout>();
  const listen = async () => {
    if (stopped) return;
    const c = new pg.Client({
      connectionString: opts.databaseUrl,
      application_name: 'phasewright-worker-wake',
    });
    // One notification, one job: wake one fetch loop, in turn, rather than all of them (each wake-up
    // is a fetch query). A loop that finds more work than its batch keeps fetching without waiting.
    // A queue with `gatherMs` is woken once per gathering window, whatever number of jobs arrived in it.
    const turn = new Map<string, number>();
    const wake = (name: string, ids: string[]) => {
      const i = turn.get(name) ?? 0;
      turn.set(name, (i + 1) % ids.length);
      queue.boss.notifyWorker(ids[i]);
    };
    c.on('notification', (msg) => {
      const name = msg.payload ?? '';
      const ids = loops.get(name);
      if (!ids?.length) return;
      const gatherMs = gathering.get(name);
      if (gatherMs === undefined) return wake(name, ids);
      if (gatherTimers.has(name)) return;
      gatherTimers.set(
        name,
        setTimeout(() => {
          gatherTimers.delete(name);
          if (!stopped) wake(name, ids);
        }, gatherMs),
      );
    });
    // A dying connection can report more than one error: reconnect once per connection.
    let lost = false;
    c.on('error', (err) => {
      if (lost) return;
      lost = true;
      logger.warn({ err: err.message }, 'wake-up connection lost; reconnecting');
      if (listener === c) listener = null;
      c.end().catch(() => {});
      if (!stopped) setTimeout(() => void listen(), 500);
    });
    try {
      await c.connect();
      await c.query(`LISTEN ${JOBS_WAKE_CHANNEL}`);
      listener = c;
      // Anything sent while we were not listening is picked up by the regular poll.
    } catch {
      if (lost) return;
      lost = true;
      c.end().catch(() => {});
      setTimeout(() => void listen(), 1000);
    }
  };
  await listen();

  logger.info({ jobs: served.map((j) => queues[j.queue].name) }, 'worker started');
  return {
    deps,
    async stop() {
      stopped = true;
      for (const t of gatherTimers.values()) clearTimeout(t);
      await listener?.end().catch(() => {});
      await queue.stop();
      mailer?.close();
      await database.close();
    },
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  let settings: ReturnType<typeof workerSettings>;
  try {
    settings = workerSettings();
  } catch (e) {
    console.error((e as Error).message);
    process.exit(2);
  }
  const url = settings.DATABASE_URL;
  // WORKER_QUEUES=a,b serves only those queues, so CPU-heavy renders can run in a process of their own.
  const only = settings.WORKER_QUEUES;
  const known = Object.values(queues).map((q) => q.name as string);
  const unknown = only?.filter((q) => !known.includes(q)) ?? [];
  if (unknown.length) {
    console.error(`WORKER_QUEUES names unknown queues: ${unknown.join(', ')} (known: ${known.join(', ')})`);
    process.exit(2);
  }
  const env = parseEnv();
  const worker = await startWorker({
    databaseUrl: url,
    logLevel: settings.LOG_LEVEL,
    queues: only,
    mail: { smtpUrl: env.SMTP_URL, from: env.MAIL_FROM, publicUrl: env.PUBLIC_URL },
  });
  const stop = () => void worker.stop().then(() => process.exit(0));
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}
