import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '#tests/harness/db';
import { createLogger } from '#server/lib/logger';
import type { LineEvent } from '#shared/schemas/events';
import { createEventHub, notifyLineEvent } from './event-hub';

// A database restart drops every connection. The LISTEN connection must survive it without an
// unhandled 'error' event (which would end the process) and listen again.
let t: TestDatabase;
beforeAll(async () => {
  t = await createTestDatabase();
});
afterAll(async () => {
  await t.drop();
});

/**
 * Ends this database's backends with the given application name, as a server restart would (the app
 * role may end its own sessions).
 */
async function dropConnections(applicationName: string): Promise<number> {
  const { rows } = await t.pool.query<{ n: number }>(
    `select count(pg_terminate_backend(pid))::int as n from pg_stat_activity
      where datname = current_database() and application_name = $1 and pid <> pg_backend_pid()`,
    [applicationName],
  );
  return rows[0].n;
}

const event = (serial: string): LineEvent => ({
  type: 'measurement.received',
  stationId: 's',
  unitId: 'u',
  serial,
  measurementId: 'm',
  at: new Date().toISOString(),
});

describe('connections that the database drops', () => {
  it('the event hub listens again after its connection is dropped, and delivers new events', async () => {
    const hub = createEventHub(t.url, createLogger('silent'));
    await hub.ready;
    const seen: string[] = [];
    hub.subscribe((e) => {
      if ('serial' in e) seen.push(e.serial);
    });
    try {
      expect(await dropConnections('phasewright-events')).toBe(1);
      const deadline = Date.now() + 10_000;
      let i = 0;
      while (!seen.some((s) => s.startsWith('after-')) && Date.now() < deadline) {
        await notifyLineEvent(t.db, event(`after-${i++}`));
        await new Promise((r) => setTimeout(r, 100));
      }
      expect(seen.some((s) => s.startsWith('after-'))).toBe(true);
    } finally {
      await hub.close();
    }
  });
});
