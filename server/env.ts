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
  /** Public base URL used in e-mailed links. */
  PUBLIC_URL: z.string().url().optional(),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** Where the built client lives; served with a single-page fallback when present. */
  CLIENT_DIST: z.string().default('dist/client'),
  /** Plant setting: `true` lets one engineer submit and approve their own recipe draft (default: two people). */
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
