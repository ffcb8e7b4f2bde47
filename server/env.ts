import { z } from 'zod';

/**
 * Configuration, parsed once from the environment. Every variable is documented in the README
 * ("Configuration"). Anything wrong stops the process with a message naming the variable.
 */
const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  HOST: z.string().default('127.0.0.1'),
  DATABASE_URL: z.string().url('DATABASE_URL must be a postgres:// URL'),
  /** The owner role, for migrations; without it DATABASE_URL's role migrates (one role does everything). */
  DATABASE_OWNER_URL: z.string().url('DATABASE_OWNER_URL must be a postgres:// URL').optional(),
  /**
   * A streaming-replication standby of DATABASE_URL's database, as the app role: statistics, containment
   * searches and exports read from it. Unset (or empty): they read from the primary.
   */
  DATABASE_READ_URL: z.preprocess(
    (v) => (v === '' ? undefined : v),
    z.string().url('DATABASE_READ_URL must be a postgres:// URL').optional(),
  ),
  /**
   * Keep the line statistics' rows in memory, column by column, and catch up with what changed before each
   * view (decision 62): whole-model views in tens of milliseconds instead of seconds, for about 70 bytes per
   * calibration of the models viewed. `false`: every view is one SQL statement over calibration_stats.
   */
  STATISTICS_IN_MEMORY: z
    .enum(['true', 'false'])
    .default('true')
    .transform((v) => v === 'true'),
  /** Apply migrations when the server starts (npm start migrates in a step of its own and sets false). */
  MIGRATE_ON_START: z
    .enum(['true', 'false'])
    .default('true')
    .transform((v) => v === 'true'),
  /** Secret for signing session tokens; required outside development and tests. */
  SESSION_SECRET: z.string().min(32, 'SESSION_SECRET must be at least 32 characters').optional(),
  /** Send session cookies only over HTTPS (set when a TLS proxy fronts the server). */
  COOKIE_SECURE: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true'),
  /** SMTP relay for outgoing mail; defaults to the local fake mail server. */
  SMTP_URL: z.string().default('smtp://127.0.0.1:2525'),
  /** HTTP endpoint of the local fake mail server's mailbox (admin outbox); empty when a real relay is used. */
  MAILBOX_URL: z.string().default('http://127.0.0.1:2580'),
  MAIL_FROM: z.string().default('Phasewright <no-reply@phasewright.local>'),
  /**
   * S3-compatible object storage for investigation attachments; the defaults point at the local fake
   * store that `npm start` runs. A real service works by setting these five (and path style if needed).
   */
  STORAGE_ENDPOINT: z
    .string()
    .url('STORAGE_ENDPOINT must be an http(s):// URL')
    .default('http://127.0.0.1:2590'),
  STORAGE_BUCKET: z.string().min(3).max(63).default('phasewright-attachments'),
  STORAGE_REGION: z.string().min(1).default('us-east-1'),
  STORAGE_ACCESS_KEY_ID: z.string().min(1).default('phasewright-local'),
  STORAGE_SECRET_ACCESS_KEY: z.string().min(1).default('phasewright-local-secret'),
  /** `true` (default): https://endpoint/bucket/key; `false`: https://bucket.endpoint/key. */
  STORAGE_FORCE_PATH_STYLE: z
    .enum(['true', 'false'])
    .default('true')
    .transform((v) => v === 'true'),
  /** Public base URL used in e-mailed links. */
  PUBLIC_URL: z.string().url().optional(),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** Where the built client lives; served with a single-page fallback when present. */
  CLIENT_DIST: z.string().default('dist/client'),
  /** Plant time zone (IANA name) for shift starts and qualification times. */
  PLANT_TIME_ZONE: z
    .string()
    .default('UTC')
    .refine((tz) => {
      try {
        new Intl.DateTimeFormat('en', { timeZone: tz });
        return true;
      } catch {
        return false;
      }
    }, 'PLANT_TIME_ZONE must be an IANA time zone such as Europe/Berlin'),
  /** Plant setting: `true` lets one engineer submit and approve their own recipe draft (default: two people). */
  RECIPE_SINGLE_PERSON_RELEASE: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true'),
  BCRYPT_COST: z.coerce.number().int().min(10).max(15).default(10),
  /**
   * Which proxies may tell the client's address in X-Forwarded-For (sign-in throttling, audit log).
   * `false` (default): nobody, the connection's address counts. Otherwise Express's "trust proxy"
   * value: `loopback`, a comma-separated list of addresses/subnets, or a number of hops.
   */
  TRUST_PROXY: z
    .string()
    .default('false')
    .transform((v): boolean | number | string => {
      const t = v.trim();
      if (t === 'false' || t === '') return false;
      if (/^\d+$/.test(t)) return Number(t);
      return t;
    })
    .refine((v) => v !== 'true', 'TRUST_PROXY=true would trust any X-Forwarded-For; name the proxy instead'),
});

export type Env = z.infer<typeof envSchema> & { SESSION_SECRET: string; PUBLIC_URL: string };

const DEV_SECRET = 'phasewright-development-secret-not-for-production-use';

export function parseEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`Configuration is invalid:\n${lines.join('\n')}`);
  }
  const env = parsed.data;
  if (!env.SESSION_SECRET && env.NODE_ENV === 'production') {
    throw new Error('Configuration is invalid:\n  SESSION_SECRET: required in production (32+ characters)');
  }
  return {
    ...env,
    SESSION_SECRET: env.SESSION_SECRET ?? DEV_SECRET,
    PUBLIC_URL: env.PUBLIC_URL ?? `http://localhost:${env.PORT}`,
  };
}

/*
 * Settings of the other processes and of modules that are not given the server's `Env`. Each is read
 * from the environment here and nowhere else (the linter refuses `process.env` outside this file);
 * every variable is in the README's configuration table.
 */

function parseOrExplain<T extends z.ZodType>(schema: T, source: NodeJS.ProcessEnv): z.infer<T> {
  const parsed = schema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`Configuration is invalid:\n${lines.join('\n')}`);
  }
  return parsed.data;
}

const isTimeZone = (tz: string) => {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: tz });
    return true;
  } catch {
    return false;
  }
};

const travelerSchema = z.object({
  /** What the traveler's header says (the demo scenario's company and plant by default). */
  TRAVELER_COMPANY: z.string().default('Corvane Motion Ltd'),
  TRAVELER_PLANT: z.string().default('Hollin Ridge Works'),
  /** The zone the traveler's times print in (an IANA name such as Europe/Berlin). */
  TRAVELER_TIME_ZONE: z
    .string()
    .default('UTC')
    .refine(isTimeZone, 'TRAVELER_TIME_ZONE must be a time zone name such as UTC or Europe/Berlin'),
});
export type TravelerSettings = z.infer<typeof travelerSchema>;

let travelerSettingsRead: TravelerSettings | undefined;
/** The traveler's header and time zone, read once per process. */
export function travelerSettings(source: NodeJS.ProcessEnv = process.env): TravelerSettings {
  if (source !== process.env) return parseOrExplain(travelerSchema, source);
  return (travelerSettingsRead ??= parseOrExplain(travelerSchema, source));
}

const queueSchema = z.object({
  /** How often the job supervisor looks for jobs whose worker died, in seconds. */
  QUEUE_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).max(3600).default(10),
});
/** Job-queue settings shared by the server and the workers. */
export function queueSettings(source: NodeJS.ProcessEnv = process.env) {
  return parseOrExplain(queueSchema, source);
}

const workerSchema = z.object({
  DATABASE_URL: z.string({ error: 'DATABASE_URL is not set.' }).url('DATABASE_URL must be a postgres:// URL'),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** WORKER_QUEUES=a,b serves only those queues (all when empty). */
  WORKER_QUEUES: z
    .string()
    .optional()
    .transform((v) =>
      v
        ?.split(',')
        .map((q) => q.trim())
        .filter(Boolean),
    ),
});
/** The worker process's own settings (it also reads the server's for mail). */
export function workerSettings(source: NodeJS.ProcessEnv = process.env) {
  return parseOrExplain(workerSchema, source);
}

const demoSchema = z.object({
  /** Create the demo accounts (server) and demo line (seed) on first start. */
  SEED_DEMO: z.string().default('false'),
  /** Where the demo seed keeps the simulator's station key; `null` means the default under `.data/`. */
  DEMO_KEY_FILE: z.string().optional(),
  DEMO_LINE_UNITS: z.string().default('2500'),
  DEMO_BASE_URL: z.string().optional(),
  /** The plant's time zone, for the demo's shift-start qualification readings. */
  PLANT_TIME_ZONE: z.string().optional(),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  DATABASE_URL: z.string().optional(),
});
/** The demo seed's and station simulator's settings. */
export function demoSettings(source: NodeJS.ProcessEnv = process.env) {
  const d = parseOrExplain(demoSchema, source);
  return {
    ...d,
    seedDemo: d.SEED_DEMO === 'true',
    DEMO_BASE_URL: d.DEMO_BASE_URL ?? `http://localhost:${d.PORT}`,
  };
}

const toolSchema = z.object({
  DATABASE_URL: z.string().optional(),
  DATABASE_OWNER_URL: z.string().optional(),
  /** Which private PostgreSQL the backup tools use (`dev` by default). */
  PG_INSTANCE: z.string().default('dev'),
  BACKUP_DIR: z.string().optional(),
  FAKE_SMTP_PORT: z.coerce.number().int().min(0).max(65535).default(2525),
  FAKE_MAIL_HTTP_PORT: z.coerce.number().int().min(0).max(65535).default(2580),
  FAKE_MAIL_STORE: z.string().optional(),
  FAKE_STORAGE_PORT: z.coerce.number().int().min(0).max(65535).default(2590),
  /** Where the fake object store keeps its files (`.data/objects` under `npm start`). */
  FAKE_STORAGE_DIR: z.string().default('.data/objects'),
});
/** Settings of the command-line tools (migrate, backup, restore, fake mail, fake object store). */
export function toolSettings(source: NodeJS.ProcessEnv = process.env) {
  const t = parseOrExplain(toolSchema, source);
  return { ...t, DATABASE_OWNER_URL: t.DATABASE_OWNER_URL || undefined, PG_INSTANCE: t.PG_INSTANCE || 'dev' };
}

/**
 * The environment handed to a child process (pg_dump, pg_restore), without the PG* variables that
 * would point it at another server than the URL it is given.
 */
export function childProcessEnv(source: NodeJS.ProcessEnv = process.env): NodeJS.ProcessEnv {
  return Object.fromEntries(Object.entries(source).filter(([k]) => !k.startsWith('PG')));
}

/** The raw environment, for code that looks for tool binaries on PATH the way a shell does. */
export function processEnvironment(): NodeJS.ProcessEnv {
  return process.env;
}
