import http from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';

let t: TestApp;
let line: Awaited<ReturnType<typeof createLineFixture>>;
let engineer = '';
let quality = '';

const cookieOf = (username: string, password: string) => sessionCookie(t.app, username, password);

beforeAll(async () => {
  t = await createTestApp();
  line = await createLineFixture(t.deps.db, { code: 'TM-40' });
  engineer = await cookieOf('evan.engineer', 'demo-engineer-pass');
  quality = await cookieOf('quinn.quality', 'demo-quality-pass');
});
afterAll(async () => {
  await t?.close();
});

const importCsv = (csv: string) =>
  request(t.app)
    .post('/api/units/import')
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', engineer)
    .attach('file', Buffer.from(csv), 'work-order.csv');

describe('work-order import', () => {
  it('imports every row with its lots', async () => {
    const res = await importCsv(
      'Serial,Model,Work Order,Hall Board Lot,Magnet Ring Lot,Stator Lot\nWO-0001,tm-40,WO-77,HB-1,MR-1,ST-1\nWO-0002,TM-40,WO-77,HB-2,MR-1,ST-1\n',
    );
    expect(res.status).toBe(201);
    expect(res.body).toEqual({ imported: 2, rows: 2, errors: [] });
    const unit = await request(t.app)
      .get('/api/units/wo-0002')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality);
    expect(unit.body.unit.lots).toEqual({ hallBoard: 'HB-2', magnetRing: 'MR-1', stator: 'ST-1' });
  });

  it('reports every bad row by its line number and imports nothing', async () => {
    const res = await importCsv(
      'serial,model\nWO-0100,TM-40\n,TM-40\nWO-0101,NOPE-9\nWO-0100,TM-40\nWO-0001,TM-40\nbad serial!,TM-40\n',
    );
    expect(res.status).toBe(422);
    expect(res.body.imported).toBe(0);
    expect(res.body.errors.map((e: { row: number }) => e.row)).toEqual([3, 4, 5, 6, 7]);
    const { rows } = await t.database.pool.query(
      `select count(*)::int as n from units where serial = 'WO-0100'`,
    );
    expect(rows[0].n).toBe(0);
  });

  it('names missing columns', async () => {
    const res = await importCsv('id,type\n1,2\n');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/serial, model/);
  });
});

describe('holds', () => {
  it('quality puts a unit on hold with a reason; stations may not measure it until released', async () => {
    await request(t.app)
      .post('/api/units')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ serial: 'SN-QHOLD', modelId: line.model.id });
    const noReason = await request(t.app)
      .post('/api/units/SN-QHOLD/hold')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ hold: true, reason: '' });
    expect(noReason.status).toBe(400);
    const held = await request(t.app)
      .post('/api/units/SN-QHOLD/hold')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ hold: true, reason: 'customer return RMA-12' });
    expect(held.body.unit).toMatchObject({ status: 'on_hold', holdReason: 'customer return RMA-12' });
    const refused = await request(t.app)
      .post('/api/station/measurements')
      .set('X-Station-Key', line.key)
      .send(simulatedMeasurement(line.recipe.body, 'SN-QHOLD'));
    expect(refused.status).toBe(409);
    const released = await request(t.app)
      .post('/api/units/SN-QHOLD/hold')
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ hold: false, reason: 'checked, fine', disposition: 'recalibrate' });
    expect(released.body.unit.status).toBe('new');
    const { rows } = await t.database.pool.query(
      `select action, reason from audit_log where action in ('units.held', 'units.released') order by id`,
    );
    expect(rows).toEqual([
      { action: 'units.held', reason: 'customer return RMA-12' },
      { action: 'units.released', reason: 'checked, fine' },
    ]);
  });
});

describe('live events for the station screen', () => {
  it('streams measurement received and result as Server-Sent Events', async () => {
    const server = http.createServer(t.app).listen(0, '127.0.0.1');
    await new Promise((r) => server.once('listening', r));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    const controller = new AbortController();
    try {
      const res = await fetch(`${base}/api/stations/${line.station.id}/events`, {
        headers: { cookie: quality },
        signal: controller.signal,
      });
      expect(res.headers.get('content-type')).toMatch(/text\/event-stream/);
      const reader = res.body!.getReader();
      const seen: string[] = [];
      const reading = (async () => {
        let buf = '';
        while (!seen.includes('measurement.received')) {
          const { value, done } = await reader.read();
          if (done) break;
          buf += new TextDecoder().decode(value);
          for (const m of buf.matchAll(/event: ([\w.]+)/g)) if (!seen.includes(m[1])) seen.push(m[1]);
        }
      })();
      await t.deps.events.ready;
      await new Promise((r) => setTimeout(r, 100));
      const posted = await request(t.app)
        .post('/api/station/measurements')
        .set('X-Station-Key', line.key)
        .send(simulatedMeasurement(line.recipe.body, 'SN-SSE'));
      expect(posted.status).toBe(202);
      await Promise.race([reading, new Promise((r) => setTimeout(r, 5000))]);
      expect(seen).toContain('measurement.received');
    } finally {
      controller.abort();
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
    }
  });
});
