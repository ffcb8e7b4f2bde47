import { EventEmitter } from 'node:events';
import { createRequire } from 'node:module';
import PgBoss from 'pg-boss';
import pg from 'pg';
import { JOBS_WAKE_CHANNEL, queues } from './queues';
import { queueSettings } from '#server/env';
import { prepared } from '#server/db/prepared';

/** Where pg-boss keeps its tables, in the application's database. */
export const BOSS_SCHEMA = 'pgboss';

export interface QueueStats {
  queued: number;
  active: number;
  failed: number;
}

/** What the HTTP side needs of the job queue: sending jobs and reporting depth. */
export interface JobQueue {
  /**
   * Sends a job. With `db` the job is inserted through that connection, i.e. inside the caller's
   * transaction: it exists exactly when the transaction commits. Workers are woken at commit.
   */
  send<K extends keyof typeof queues>(
    queue: K,
    payload: unknown,
    opts?: {
      singletonKey?: string;
      /** Higher is fetched first (pg-boss orders by priority, then by age). */
      priority?: number;
      db?: PgBoss.Db;
      /** Further notifications to send in the same statement as the workers' wake-up (saves a round trip). */
      notify?: { channel: string; payload: string }[];
      /** false when the caller sends the wake-up itself, in a statement of its own choosing. */
      wake?: boolean;
    },
  ): Promise<string | null>;
  stats(): Promise<QueueStats>;
  /**
   * True when sending does nothing (the demo seed's queue): producers that insert jobs inside their own
   * statements (jobInsertSql) must then insert none, and send no wake-up.
   */
  readonly silent?: boolean;
  boss: PgBoss;
  stop(): Promise<void>;
}

/**
 * The texts of pg-boss's statements that run once a job or more: a fetch loop's fetch (every variant
 * `work` and `fetch` build), and the completion and failure of jobs by id. Taken from pg-boss's own plan
 * builders, so they are exactly the texts it sends; empty (nothing prepared, everything sent as pg-boss
 * sends it) if a later pg-boss moves them.
 */
export function hotQueueTexts(schema: string): Set<string> {
  try {
    const plans = createRequire(import.meta.url)('pg-boss/src/plans.js') as {
      fetchNextJob(schema: string): (o: { includeMetadata?: boolean; priority?: boolean }) => string;
      completeJobs(schema: string): string;
      failJobsById(schema: string): string;
    };
    const texts = new Set([plans.completeJobs(schema), plans.failJobsById(schema)]);
    for (const includeMetadata of [false, true])
      for (const priority of [false, true])
        texts.add(plans.fetchNextJob(schema)({ includeMetadata, priority }));
    return texts;
  } catch {
    return new Set();
  }
}

/**
 * pg-boss's connections (its `db`). pg-boss sends every statement unnamed, so PostgreSQL plans each call:
 * its fetch and its completion, a few a unit on the line, cost about 1 ms of planning each against 0.1–0.2
 * ms of running (the job table is partitioned by queue, with six indexes a partition). Those few texts
 * (`hotQueueTexts`) go as named prepared statements over connections of their own that use generic plans
 * (`plan_cache_mode`: a custom plan never loses to a generic one on the partitioned table, because only the
 * custom plan prunes the other queues' partitions when it is made, so PostgreSQL would otherwise plan them
 * every time; the generic plan prunes them when it runs). Everything else (maintenance, schedules, queue
 * set-up, multi-statement texts) goes as pg-boss sends it, over the other pool.
 *
 * The hot connections also commit without waiting for the WAL flush (`synchronous_commit=off`): a fetch
 * (job → active), a completion or a failure that a crash of the database loses within its last fraction of
 * a second leaves the job to be fetched again (or expired and retried), and every job is safe to run twice.
 * The commits that matter (a measurement, a calibration, a traveler) are the producers' own, and stay
 * synchronous; any later synchronous commit flushes the WAL written before it, these records included.
 */
class QueueDb extends EventEmitter {
  readonly opened = true;
  private readonly pool: pg.Pool;
  private readonly hotPool: pg.Pool;
  private readonly hot = hotQueueTexts(BOSS_SCHEMA);

  constructor(url: string, max: number) {
    super();
    const base = { connectionString: url, application_name: 'phasewright-queue' };
    this.pool = new pg.Pool({ ...base, max: 2 });
    this.hotPool = new pg.Pool({
      ...base,
      max,
      options: '-c plan_cache_mode=force_generic_plan -c synchronous_commit=off',
    });
    for (const p of [this.pool, this.hotPool]) p.on('error', (err) => this.emit('error', err));
  }

  executeSql(text: string, values?: unknown[]) {
    if (values && this.hot.has(text)) return this.hotPool.query(prepared(text, values));
    return this.pool.query(text, values);
  }

  async close() {
    await Promise.all([this.pool.end(), this.hotPool.end()]);
  }
}

/** A pg-boss and the connections it runs on (close them after `boss.stop()`). */
export function createBoss(
  url: string,
  opts: { max?: number; supervise?: boolean; schedule?: boolean; migrate?: boolean } = {},
): { boss: PgBoss; db: QueueDb } {
  const db = new QueueDb(url, opts.max ?? 4);
  const boss = new PgBoss({
    db,
    schema: BOSS_SCHEMA,
    // The running processes connect as the app role, which cannot create or change pg-boss's tables:
    // the owner installs them at migrate time (installJobQueue) and the processes only check them.
    migrate: opts.migrate ?? false,
    supervise: opts.supervise ?? false,
    schedule: opts.schedule ?? false,
    // How often the supervisor looks for jobs whose worker died (their expiry passed) and retries them.
    maintenanceIntervalSeconds: queueSettings().QUEUE_MAINTENANCE_SECONDS,
  });
  // pg-boss reports its connections' errors only for a db of its own making.
  db.on('error', (err) => boss.emit('error', err));
  return { boss, db };
}

/**
 * Installs (or upgrades) pg-boss's schema and creates every queue with its policy. Run as the owner
 * role by the migration step: it is DDL, which the app role may not do.
 */
export async function installJobQueue(ownerUrl: string): Promise<void> {
  const { boss, db } = createBoss(ownerUrl, { max: 1, migrate: true });
  boss.on('error', () => {});
  try {
    await boss.start();
    for (const q of Object.values(queues)) await ensureQueue(boss, q.name, q.policy);
  } finally {
    await boss.stop({ graceful: false, wait: true });
    await db.close();
  }
}

/**
 * Starts pg-boss on a database the migration step prepared (installJobQueue) and checks that every
 * queue exists with its policy. pg-boss's own errors (a lost connection while the database restarts)
 * are logged, not thrown: its pool reconnects and its loops carry on.
 */
export async function startJobQueue(
  url: string,
  pool: pg.Pool,
  opts: { supervise?: boolean; schedule?: boolean; onError?: (err: Error) => void } = {},
): Promise<JobQueue> {
  const { boss, db } = createBoss(url, opts);
  boss.on('error', (err) => opts.onError?.(err));
  await boss.start();
  for (const q of Object.values(queues)) await ensureQueue(boss, q.name, q.policy);
  return {
    boss,
    async send(queue, payload, sendOpts) {
      const def = queues[queue];
      const data = def.payload.parse(payload);
      const id = await boss.send(def.name, data, {
        singletonKey: sendOpts?.singletonKey,
        // pg-boss refuses a priority key whose value is not an integer, undefined included.
        ...(sendOpts?.priority === undefined ? {} : { priority: sendOpts.priority }),
        db: sendOpts?.db,
      });
      if (sendOpts?.wake === false) return id;
      const extra = sendOpts?.notify ?? [];
      const wake =
        `select pg_notify('${JOBS_WAKE_CHANNEL}', $1)` +
        extra.map((_, i) => `, pg_notify($${2 * i + 2}, $${2 * i + 3})`).join('');
      const values = [def.name, ...extra.flatMap((n) => [n.channel, n.payload])];
      if (sendOpts?.db) await sendOpts.db.executeSql(wake, values);
      else await pool.query(wake, values);
      return id;
    },
    async stats() {
      const { rows } = await pool.query<{ state: string; n: number }>(
        `select state::text as state, count(*)::int as n from ${BOSS_SCHEMA}.job group by state`,
      );
      const by = Object.fromEntries(rows.map((r) => [r.state, r.n]));
      return {
        queued: (by.created ?? 0) + (by.retry ?? 0),
        active: by.active ?? 0,
        failed: by.failed ?? 0,
      };
    },
    async stop() {
      await boss.stop({ graceful: true, wait: true });
      await db.close();
    },
  };
}

/** Creates the queue with its policy, or brings an existing queue's policy up to date. */
export async function ensureQueue(
  boss: PgBoss,
  name: string,
  policy: Omit<PgBoss.Queue, 'name'>,
): Promise<void> {
  const existing = await boss.getQueue(name);
  if (!existing) await boss.createQueue(name, { name, ...policy });
  else if (
    existing.retryLimit !== policy.retryLimit ||
    existing.retryDelay !== policy.retryDelay ||
    existing.retryBackoff !== policy.retryBackoff ||
    existing.expireInSeconds !== policy.expireInSeconds
  ) {
    await boss.updateQueue(name, { name, ...policy });
  }
}

/**
 * SQL that inserts one job of queue `queueParam` per row of `fromSql`, for use as a data-modifying CTE
 * inside a producer's own statement: the job exists exactly when that statement commits, and sending it
 * costs no round trip of its own. It applies the queue's policy (retries, backoff, expiry, retention) as
 * pg-boss 10's own insert does (pg-boss/src/plans.js, insertJob), and the job is fetched, retried and
 * expired by pg-boss like any other. The caller wakes the workers (pg_notify on JOBS_WAKE_CHANNEL) in the
 * same statement.
 */
export function jobInsertSql(opts: {
  /** Placeholder (e.g. '$7') holding the queue's name. */
  queueParam: string;
  /** SQL giving the job's data as jsonb, from the columns of `fromSql`. */
  dataSql: string;
  /** SQL giving the job's priority (higher first); 0 when absent. */
  prioritySql?: string;
  /** The rows to make jobs of (a CTE name). */
  fromSql: string;
}): string {
  return `insert into ${BOSS_SCHEMA}.job (name, data, priority, dead_letter, expire_in, keep_until,
                                  retry_limit, retry_delay, retry_backoff, policy)
      select q.name, ${opts.dataSql}, ${opts.prioritySql ?? '0'}, q.dead_letter,
             coalesce(q.expire_seconds * interval '1s', interval '15 minutes'),
             now() + cast(coalesce((q.retention_minutes * 60)::text, '14 days') as interval),
             coalesce(q.retry_limit, 2),
             case when coalesce(q.retry_backoff, false) then greatest(coalesce(q.retry_delay, 0), 1)
                  else coalesce(q.retry_delay, 0) end,
             coalesce(q.retry_backoff, false), q.policy
        from ${opts.fromSql} join ${BOSS_SCHEMA}.queue q on q.name = ${opts.queueParam}
      returning id`;
}
