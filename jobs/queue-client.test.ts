import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createTestApp, type TestApp } from '#tests/harness/test-app';
import { BOSS_SCHEMA, createBoss, hotQueueTexts, jobInsertSql } from './queue-client';
import { queues } from './queues';

let t: TestApp;

beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

describe('a job queued inside a producer statement', () => {
  it('carries the same policy as one sent through the job queue library, and is fetched like one', async () => {
    const name = queues.calibrationCompute.name;
    const payload = { measurementPk: crypto.randomUUID(), recipeId: crypto.randomUUID() };
    const viaLibrary = await t.deps.queue.send('calibrationCompute', payload, { wake: false });
    const { rows } = await t.database.pool.query<{ id: string }>(
      `with src as (select $2::uuid as pk, $3::uuid as recipe),
            j as (${jobInsertSql({
              queueParam: '$1',
              dataSql: `jsonb_build_object('measurementPk', src.pk, 'recipeId', src.recipe)`,
              fromSql: 'src',
            })})
       select id from j`,
      [name, crypto.randomUUID(), payload.recipeId],
    );
    expect(rows).toHaveLength(1);
    const policy = `select retry_limit, retry_delay, retry_backoff, expire_in::text, policy, dead_letter, state::text,
                           priority, round(extract(epoch from keep_until - start_after) / 60) as keep_minutes
                      from pgboss.job where id = $1`;
    const [a] = (await t.database.pool.query(policy, [viaLibrary])).rows;
    const [b] = (await t.database.pool.query(policy, [rows[0].id])).rows;
    expect(b).toEqual(a);
    // The queue's own policy (jobs/queues.ts), not a default.
    expect(b.retry_limit).toBe(queues.calibrationCompute.policy.retryLimit);
    expect(b.expire_in).toBe('00:00:30');

    const fetched = new Set<string>();
    for (let i = 0; i < 2; i += 1) {
      const [job] = (await t.deps.queue.boss.fetch(name)) ?? [];
      if (job) fetched.add(job.id);
    }
    expect(fetched).toEqual(new Set([viaLibrary, rows[0].id]));
  });
});

describe('the job queue on the line', () => {
  it("fetches and completes jobs through prepared statements of pg-boss's own texts", async () => {
    const hot = hotQueueTexts(BOSS_SCHEMA);
    expect(hot.size).toBe(6);
    const { boss, db } = createBoss(t.database.url, { max: 2 });
    const sent = vi.spyOn(db, 'executeSql');
    await boss.start();
    try {
      const name = queues.chartWatch.name;
      const id = await boss.send(name, { stationId: crypto.randomUUID(), modelId: crypto.randomUUID() });
      // Twice each: the second call runs the statement prepared by the first on the same connection.
      const ids: string[] = [];
      for (let i = 0; i < 2; i += 1)
        ids.push(...((await boss.fetch(name, { batchSize: 5 })) ?? []).map((j) => j.id));
      expect(ids).toEqual([id]);
      await boss.complete(name, id!);
      await boss.complete(name, id!);
      const hotCalls = sent.mock.calls.filter(([text]) => hot.has(text));
      // Two fetches and two completions went the prepared way: pg-boss sends exactly the texts named hot.
      expect(hotCalls).toHaveLength(4);
      const { rows } = await t.database.pool.query('select state::text from pgboss.job where id = $1', [id]);
      expect(rows[0].state).toBe('completed');
    } finally {
      await boss.stop({ graceful: false, wait: true });
      await db.close();
    }
  });
});
