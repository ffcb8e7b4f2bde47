import { EventEmitter } from 'node:events';
import pg from 'pg';
import { sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import type { Logger } from '#server/lib/logger';
import { lineEventSchema, type LineEvent } from '#shared/schemas/events';
import { whatIfProgressSchema, type WhatIfProgress } from '#shared/schemas/recipes';

/** The PostgreSQL channel every line event travels on (NOTIFY is delivered at commit). */
export const EVENTS_CHANNEL = 'phasewright_events';

/**
 * Queues a line event inside the caller's transaction: listeners see it only if, and as soon as,
 * the transaction commits. Works across processes (the worker commits, the server hears it).
 */
export async function notifyLineEvent(db: DbOrTx, event: LineEvent): Promise<void> {
  await db.execute(sql`select pg_notify(${EVENTS_CHANNEL}, ${JSON.stringify(event)})`);
}

export interface EventHub {
  subscribe(listener: (e: LineEvent) => void): () => void;
  /** Progress of what-if runs (recipe analysis), on the same channel. */
  subscribeWhatIf(listener: (e: WhatIfProgress) => void): () => void;
  /** Resolves once the LISTEN connection is up. */
  ready: Promise<void>;
  close(): Promise<void>;
}

/**
 * One LISTEN connection per process, fanned out to in-process subscribers (long-polls, SSE streams).
 * Reconnects after a lost connection; events sent while it was down are not replayed, so every
 * consumer re-reads the database after subscribing rather than trusting events alone.
 */
export function createEventHub(url: string, logger: Logger): EventHub {
  const emitter = new EventEmitter();
  emitter.setMaxListeners(0);
  let client: pg.Client | null = null;
  let closed = false;
  let resolveReady!: () => void;
  const ready = new Promise<void>((r) => (resolveReady = r));

  const connect = async (): Promise<void> => {
    if (closed) return;
    const c = new pg.Client({ connectionString: url, application_name: 'phasewright-events' });
    c.on('notification', (msg) => {
      if (msg.channel !== EVENTS_CHANNEL || !msg.payload) return;
      const payload: unknown = JSON.parse(msg.payload);
      const parsed = lineEventSchema.safeParse(payload);
      if (parsed.success) return void emitter.emit('event', parsed.data);
      const whatIf = whatIfProgressSchema.safeParse(payload);
      if (whatIf.success) emitter.emit('whatif', whatIf.data);
    });
    // A dying connection can report more than one error: reconnect once per connection.
    let lost = false;
    c.on('error', (err) => {
      if (lost) return;
      lost = true;
      logger.warn({ err: err.message }, 'event connection lost; reconnecting');
      if (client === c) client = null;
      c.end().catch(() => {});
      if (!closed) setTimeout(() => void connect(), 500);
    });
    try {
      await c.connect();
      await c.query(`LISTEN ${EVENTS_CHANNEL}`);
      client = c;
      resolveReady();
    } catch (err) {
      if (lost) return; // the error handler already scheduled the reconnection
      lost = true;
      logger.warn({ err: (err as Error).message }, 'event connection failed; retrying');
      c.end().catch(() => {});
      setTimeout(() => void connect(), 1000);
    }
  };
  void connect();

  return {
    ready,
    subscribe(listener) {
      emitter.on('event', listener);
      return () => emitter.off('event', listener);
    },
    subscribeWhatIf(listener) {
      emitter.on('whatif', listener);
      return () => emitter.off('whatif', listener);
    },
    async close() {
      closed = true;
      emitter.removeAllListeners();
      await client?.end().catch(() => {});
    },
  };
}
