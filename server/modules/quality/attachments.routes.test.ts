import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PNG } from 'pngjs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEST_ORIGIN, createTestApp, sessionCookie, type TestApp } from '#tests/harness/test-app';
import { ATTACHMENT_LIMIT_BYTES } from '#shared/schemas/attachments';
import { createLineFixture } from '#tests/harness/line-fixtures';

let t: TestApp;
let quality = '';
let engineer = '';
let operator = '';
let admin = '';

beforeAll(async () => {
  t = await createTestApp();
  quality = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  engineer = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  operator = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  admin = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
});
afterAll(async () => {
  await t?.close();
});

const sha256 = (b: Buffer) => createHash('sha256').update(b).digest('hex');
const spoolDir = path.join(os.tmpdir(), 'phasewright-uploads');
const spooled = () => (fs.existsSync(spoolDir) ? fs.readdirSync(spoolDir) : []);

/** A real 8 × 8 PNG (a scope capture stand-in). */
function png(): Buffer {
  const img = new PNG({ width: 8, height: 8 });
  for (let i = 0; i < img.data.length; i += 4) img.data.set([i % 255, 80, 160, 255], i);
  return PNG.sync.write(img);
}

async function openCase(title = 'Motor hums at low speed') {
  const res = await request(t.app)
    .post('/api/quality/investigations')
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', quality)
    .send({ title, customerRef: 'RMA-5521' });
  expect(res.status).toBe(201);
  return res.body as { id: string; reference: string };
}

const upload = (cookie: string, caseId: string, body: Buffer, name: string) =>
  request(t.app)
    .post(`/api/quality/investigations/${caseId}/attachments`)
    .set('Origin', TEST_ORIGIN)
    .set('Cookie', cookie)
    .attach('file', body, name);

const download = (cookie: string, caseId: string, id: string) =>
  request(t.app)
    .get(`/api/quality/investigations/${caseId}/attachments/${id}`)
    .set('Cookie', cookie)
    .buffer(true)
    .parse((res, cb) => {
      const parts: Buffer[] = [];
      res.on('data', (c: Buffer) => parts.push(c));
      res.on('end', () => cb(null, Buffer.concat(parts)));
    });

async function rowsOf(caseId: string) {
  const { rows } = await t.database.pool.query(
    'select * from investigation_attachments where investigation_id = $1',
    [caseId],
  );
  return rows as {
    id: string;
    sha256: string;
    object_key: string;
    size_bytes: string;
    content_type: string;
  }[];
}

describe('investigation attachments', () => {
  it('stores an upload in object storage with its SHA-256 and gives back the identical bytes', async () => {
    const inv = await openCase();
    const body = png();
    const res = await upload(quality, inv.id, body, 'scope capture 1.png');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      fileName: 'scope capture 1.png',
      contentType: 'image/png',
      sizeBytes: body.length,
      sha256: sha256(body),
      uploadedBy: 'Quinn Abernethy',
    });

    const [row] = await rowsOf(inv.id);
    expect(row.sha256).toBe(sha256(body));
    expect(await t.deps.storage.exists(row.object_key)).toBe(true);
    expect(await t.deps.storage.list(`investigations/${inv.id}/`)).toEqual([row.object_key]);

    const list = await request(t.app)
      .get(`/api/quality/investigations/${inv.id}/attachments`)
      .set('Cookie', engineer);
    expect(list.status).toBe(200);
    expect(list.body.attachments.map((a: { id: string }) => a.id)).toEqual([res.body.id]);

    const got = await download(engineer, inv.id, res.body.id);
    expect(got.status).toBe(200);
    expect(Buffer.compare(got.body as Buffer, body)).toBe(0);
    expect(got.headers['x-content-sha256']).toBe(sha256(body));
    expect(got.headers['repr-digest']).toBe(
      `sha-256=:${createHash('sha256').update(body).digest('base64')}:`,
    );
    expect(got.headers['content-type']).toBe('image/png');
    expect(got.headers['content-disposition']).toMatch(/^attachment; filename="scope capture 1.png"/);
    expect(spooled()).toEqual([]);

    const { rows: audit } = await t.database.pool.query(
      `select actor_name, after from audit_log where action = 'investigations.attachment_added' and subject_id = $1`,
      [inv.id],
    );
    expect(audit).toHaveLength(1);
    expect(audit[0].actor_name).toBe('Quinn Abernethy');
    expect(audit[0].after).toMatchObject({
      attachmentId: res.body.id,
      sha256: sha256(body),
      sizeBytes: body.length,
    });
  });

  it('accepts PDF, CSV, plain text and ZIP by their bytes, whatever the name says', async () => {
    const inv = await openCase('Customer report review');
    const pdf = Buffer.from('%PDF-1.4\n1 0 obj <<>> endobj\ntrailer <<>>\n%%EOF\n');
    const csv = Buffer.from('time_us,hall_a\n0,1\n120,0\n');
    const zip = Buffer.from('504b0506000000000000000000000000000000000000', 'hex'); // an empty ZIP archive
    const cases: [Buffer, string, string][] = [
      [pdf, 'customer report.pdf', 'application/pdf'],
      [csv, 'capture.csv', 'text/csv; charset=utf-8'],
      [
        Buffer.from('Unit returned with a rattle.\r\nNo visible damage.\n'),
        'notes',
        'text/plain; charset=utf-8',
      ],
      [png(), 'photo.jpg', 'image/png'],
      [zip, 'captures.zip', 'application/zip'],
    ];
    for (const [bytes, name, type] of cases) {
      const res = await upload(quality, inv.id, bytes, name);
      expect(res.status, name).toBe(201);
      expect(res.body.contentType, name).toBe(type);
    }
  });

  it('refuses a file over the limit with 413 and stores nothing', async () => {
    const inv = await openCase('Big file');
    const big = Buffer.alloc(ATTACHMENT_LIMIT_BYTES + 1, 0x41);
    const res = await upload(quality, inv.id, big, 'huge.txt');
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('quality.attachment_too_large');
    expect(res.body.error.message).toMatch(/larger than 20 MB.*Nothing was stored/);
    expect(await rowsOf(inv.id)).toEqual([]);
    expect(await t.deps.storage.list(`investigations/${inv.id}/`)).toEqual([]);
    await expect.poll(spooled).toEqual([]);
    // Exactly at the limit is fine.
    const atLimit = await upload(quality, inv.id, Buffer.alloc(ATTACHMENT_LIMIT_BYTES, 0x41), 'limit.txt');
    expect(atLimit.status).toBe(201);
  });

  it('refuses a program renamed .png (and other refused kinds) with a plain 415 and stores nothing', async () => {
    const inv = await openCase('Refused files');
    // A DOS/Windows executable header ("MZ", the PE offset) padded out, named like a picture.
    const exe = Buffer.alloc(512);
    exe.write('MZ', 0, 'latin1');
    exe.writeUInt32LE(0x80, 0x3c);
    exe.write('PE\0\0', 0x80, 'latin1');
    const elf = Buffer.concat([Buffer.from([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0]), Buffer.alloc(120)]);
    const binary = Buffer.from([0x00, 0x01, 0x02, 0x03, 0xfe, 0xff, 0x10, 0x80]);
    for (const [bytes, name, words] of [
      [exe, 'photo.png', /Windows program/],
      [elf, 'capture.csv', /Linux program/],
      [binary, 'data.txt', /binary data/],
      [Buffer.alloc(0), 'empty.txt', /empty file/],
    ] as const) {
      const res = await upload(quality, inv.id, bytes, name);
      expect(res.status, name).toBe(415);
      expect(res.body.error.code).toBe('quality.attachment_type_refused');
      expect(res.body.error.message).toMatch(words);
      expect(res.body.error.message).toMatch(
        /Attach PNG or JPEG pictures, PDF, CSV or plain text.*Nothing was stored/,
      );
    }
    expect(await rowsOf(inv.id)).toEqual([]);
    expect(await t.deps.storage.list(`investigations/${inv.id}/`)).toEqual([]);
    await expect.poll(spooled).toEqual([]);
  });

  it('lets quality, engineers and administrators attach and read; operators neither', async () => {
    const inv = await openCase('Roles');
    expect((await upload(operator, inv.id, png(), 'a.png')).status).toBe(403);
    expect(
      (await request(t.app).get(`/api/quality/investigations/${inv.id}/attachments`).set('Cookie', operator))
        .status,
    ).toBe(403);
    expect((await request(t.app).get(`/api/quality/investigations/${inv.id}/attachments`)).status).toBe(401);
    const byEngineer = await upload(engineer, inv.id, png(), 'b.png');
    const byAdmin = await upload(admin, inv.id, png(), 'c.png');
    expect([byEngineer.status, byAdmin.status]).toEqual([201, 201]);
    expect((await download(operator, inv.id, byEngineer.body.id)).status).toBe(403);
    expect((await download(quality, inv.id, byAdmin.body.id)).status).toBe(200);
    // Nothing was stored for the operator's refused try.
    expect(await rowsOf(inv.id)).toHaveLength(2);
  });

  it('removes an attachment with a reason (audited, kept in storage), and a closed case takes no more', async () => {
    const inv = await openCase('Removal');
    const a = await upload(quality, inv.id, png(), 'wrong unit.png');
    const noReason = await request(t.app)
      .post(`/api/quality/investigations/${inv.id}/attachments/${a.body.id}/remove`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({});
    expect(noReason.status).toBe(400);
    const removed = await request(t.app)
      .post(`/api/quality/investigations/${inv.id}/attachments/${a.body.id}/remove`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ reason: 'Photo of another unit' });
    expect(removed.status).toBe(204);
    const list = await request(t.app)
      .get(`/api/quality/investigations/${inv.id}/attachments`)
      .set('Cookie', quality);
    expect(list.body.attachments).toEqual([]);
    expect((await download(quality, inv.id, a.body.id)).status).toBe(410);
    const [row] = await rowsOf(inv.id);
    expect(await t.deps.storage.exists(row.object_key)).toBe(true);
    const { rows: audit } = await t.database.pool.query(
      `select actor_name, before, after from audit_log where action = 'investigations.attachment_removed' and subject_id = $1`,
      [inv.id],
    );
    expect(audit).toEqual([
      {
        actor_name: 'Quinn Abernethy',
        before: { attachmentId: a.body.id, fileName: 'wrong unit.png', sha256: row.sha256 },
        after: { reason: 'Photo of another unit' },
      },
    ]);
    // The app role cannot delete or rewrite an attachment row.
    await expect(
      t.database.pool.query('delete from investigation_attachments where id = $1', [a.body.id]),
    ).rejects.toThrow(/permission denied/);
    await expect(
      t.database.pool.query(`update investigation_attachments set sha256 = 'x' where id = $1`, [a.body.id]),
    ).rejects.toThrow(/permission denied/);

    const closed = await request(t.app)
      .patch(`/api/quality/investigations/${inv.id}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ status: 'closed', rootCause: 'Not a product fault' });
    expect(closed.status).toBe(200);
    const late = await upload(quality, inv.id, png(), 'late.png');
    expect(late.status).toBe(409);
    expect(await rowsOf(inv.id)).toHaveLength(1);
    expect(await t.deps.storage.list(`investigations/${inv.id}/`)).toHaveLength(1);
  });

  it('refuses to send a stored file that no longer matches its SHA-256', async () => {
    const inv = await openCase('Tampered');
    const a = await upload(quality, inv.id, png(), 'x.png');
    const [row] = await rowsOf(inv.id);
    const file = path.join(t.objects.dir, t.deps.storage.bucket, encodeURIComponent(row.object_key));
    fs.writeFileSync(file, Buffer.concat([fs.readFileSync(file), Buffer.from('x')]));
    const got = await download(quality, inv.id, a.body.id);
    expect(got.status).toBe(502);
    expect(JSON.parse((got.body as Buffer).toString()).error.code).toBe('quality.attachment_damaged');
  });

  it('answers 404 for an unknown case or attachment', async () => {
    const inv = await openCase('Unknown');
    const unknown = '00000000-0000-4000-8000-000000000000';
    expect((await upload(quality, unknown, png(), 'a.png')).status).toBe(404);
    expect((await download(quality, inv.id, unknown)).status).toBe(404);
    expect(await t.deps.storage.list(`investigations/${unknown}/`)).toEqual([]);
  });
});

describe('mail to the quality group', () => {
  /** The fake mail server's HTTP mailbox, as the admin outbox reads it. */
  async function mailbox(): Promise<{ to: string[]; subject: string; text: string }[]> {
    const res = await fetch(`http://127.0.0.1:${t.mail.httpPort}/messages`);
    return ((await res.json()) as { messages: { to: string[]; subject: string; text: string }[] }).messages;
  }

  it('goes out when a case opens and when it closes, with its link', async () => {
    const inv = await openCase('Rotor rubs after transport');
    await expect
      .poll(async () => (await mailbox()).filter((m) => m.subject.includes(inv.reference)).length, {
        timeout: 10_000,
      })
      .toBe(1);
    const opened = (await mailbox()).find((m) => m.subject.includes(inv.reference))!;
    expect(opened.to).toEqual(['quinn.quality@corvane.example']);
    expect(opened.subject).toBe(`Investigation ${inv.reference} opened: Rotor rubs after transport`);
    expect(opened.text).toContain('Customer reference: RMA-5521');
    expect(opened.text).toContain(`${TEST_ORIGIN}/quality/investigations/${inv.id}`);

    const closed = await request(t.app)
      .patch(`/api/quality/investigations/${inv.id}`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', engineer)
      .send({ status: 'closed', rootCause: 'Transport damage to the rotor shaft' });
    expect(closed.status).toBe(200);
    await expect
      .poll(
        async () => (await mailbox()).filter((m) => m.subject.includes(`${inv.reference} closed`)).length,
        {
          timeout: 10_000,
        },
      )
      .toBe(1);
    const done = (await mailbox()).find((m) => m.subject.includes(`${inv.reference} closed`))!;
    expect(done.text).toContain('Root cause: Transport damage to the rotor shaft');
  });
});

describe('audit trail for quality', () => {
  it("names cases by reference and title, and a unit's trail shows the cases it was linked to", async () => {
    const line = await createLineFixture(t.deps.db, { code: 'AT-40' });
    await t.database.pool.query('insert into units (serial, model_id) values ($1, $2), ($3, $2)', [
      'ATT-0001',
      line.model.id,
      'ATT-0002',
    ]);
    const inv = await openCase('Noise after 200 hours');
    const linked = await request(t.app)
      .post(`/api/quality/investigations/${inv.id}/units`)
      .set('Origin', TEST_ORIGIN)
      .set('Cookie', quality)
      .send({ serials: ['ATT-0001'] });
    expect(linked.status).toBe(200);
    await upload(quality, inv.id, png(), 'noise spectrum.png');

    const added = await request(t.app)
      .get('/api/audit?action=investigations.attachment_added&person=abernethy')
      .set('Cookie', quality);
    const entry = added.body.entries.find((e: { subjectId: string }) => e.subjectId === inv.id);
    expect(entry).toMatchObject({
      actorName: 'Quinn Abernethy',
      subjectType: 'investigation',
      subjectLabel: `${inv.reference} · Noise after 200 hours`,
    });

    const trail = await request(t.app).get('/api/audit?serial=ATT-0001').set('Cookie', quality);
    expect(
      trail.body.entries.map((e: { action: string; subjectLabel: string }) => [e.action, e.subjectLabel]),
    ).toEqual([['investigations.units_linked', `${inv.reference} · Noise after 200 hours`]]);
    // Another unit of the same line, never linked: its trail is empty, not the case's.
    expect(
      (await request(t.app).get('/api/audit?serial=ATT-0002').set('Cookie', quality)).body.entries,
    ).toEqual([]);
    const csv = await request(t.app).get('/api/audit.csv?serial=ATT-0001').set('Cookie', quality);
    expect(csv.text).toContain(
      `investigations.units_linked,investigation,${inv.reference} · Noise after 200 hours`,
    );
  });
});
