import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, sessionCookie, TEST_ORIGIN, type TestApp } from '#tests/harness/test-app';
import { createLineFixture } from '#tests/harness/line-fixtures';
import { simulatedMeasurement } from '#tests/harness/measurements';
import { computeCalibration } from '../measurements/measurements.service';
import type { RecipeVersionView } from '#shared/schemas/recipes';
import { approveVersion } from './recipes.service';
import { recipeDeskContext } from './recipes.routes';
import { findUserByUsername } from '../users/users.repository';

let t: TestApp;
const as: Record<'evan' | 'rosa' | 'quinn' | 'olga' | 'ada', string> = {
  evan: '',
  rosa: '',
  quinn: '',
  olga: '',
  ada: '',
};

beforeAll(async () => {
  t = await createTestApp();
  as.evan = await sessionCookie(t.app, 'evan.engineer', 'demo-engineer-pass');
  as.rosa = await sessionCookie(t.app, 'rosa.engineer', 'demo-engineer2-pass');
  as.quinn = await sessionCookie(t.app, 'quinn.quality', 'demo-quality-pass');
  as.olga = await sessionCookie(t.app, 'olga.operator', 'demo-operator-pass');
  as.ada = await sessionCookie(t.app, 'ada.admin', 'demo-admin-pass');
});
afterAll(async () => {
  await t?.close();
});

const api = (who: keyof typeof as) => ({
  get: (path: string) => request(t.app).get(path).set('Origin', TEST_ORIGIN).set('Cookie', as[who]),
  post: (path: string, body: object = {}) =>
    request(t.app).post(path).set('Origin', TEST_ORIGIN).set('Cookie', as[who]).send(body),
  patch: (path: string, body: object) =>
    request(t.app).patch(path).set('Origin', TEST_ORIGIN).set('Cookie', as[who]).send(body),
});

async function q<T = Record<string, unknown>>(text: string, values: unknown[] = []): Promise<T[]> {
  return (await t.database.pool.query(text, values)).rows as T[];
}

/** As the owner role, which holds every privilege: what refuses it then is the database's own rule. */
async function asOwner(text: string, values: unknown[] = []) {
  return (await t.database.ownerPool().query(text, values)).rows;
}

/** A fresh model with released v1 and an engineer's draft v2 copied from it. */
async function modelWithDraft(code: string) {
  const line = await createLineFixture(t.deps.db, { code, stationName: `EOL-${code}` });
  const res = await api('evan').post(`/api/models/${line.model.id}/recipes`, {
    fromRecipeId: line.recipe.id,
  });
  expect(res.status).toBe(201);
  return { line, draft: res.body as RecipeVersionView };
}

async function narrowAndSubmit(draft: RecipeVersionView, reason = 'Narrow the offset window') {
  const saved = await api('evan').patch(`/api/recipes/${draft.id}`, {
    body: { ...draft.body, limits: { ...draft.body.limits, offsetDeg: [-5, 5] } },
    revision: draft.revision,
  });
  expect(saved.status).toBe(200);
  const submitted = await api('evan').post(`/api/recipes/${draft.id}/submit`, {
    reason,
    revision: saved.body.revision,
  });
  expect(submitted.status).toBe(200);
  return submitted.body as RecipeVersionView;
}

describe('recipe lifecycle', () => {
  it('a copied draft starts as the next version with the body of the version it was copied from', async () => {
    const { line, draft } = await modelWithDraft('LC-1');
    expect(draft).toMatchObject({ version: 2, status: 'draft', revision: 1, basedOn: { version: 1 } });
    expect(draft.body).toEqual(line.recipe.body);
    expect(draft.createdBy?.displayName).toBe('Evan Thorsby');
  });

  it('the author cannot approve their own draft; a second engineer can, and it goes in force', async () => {
    const { line, draft } = await modelWithDraft('LC-2');
    const inReview = await narrowAndSubmit(draft);
    expect(inReview.status).toBe('in_review');

    const own = await api('evan').post(`/api/recipes/${draft.id}/approve`, {});
    expect(own.status).toBe(403);
    expect(own.body.error.code).toBe('recipes.own_draft');

    const approved = await api('rosa').post(`/api/recipes/${draft.id}/approve`, { comment: 'Agreed.' });
    expect(approved.status).toBe(200);
    expect(approved.body).toMatchObject({
      status: 'released',
      releasedBy: { displayName: 'Rosa Kettleby' },
      replaces: { version: 1 },
      changeReason: 'Narrow the offset window',
    });
    // The diff against the replaced version is stored with the release (old → new, with units).
    expect(approved.body.releaseDiff).toEqual([
      { path: 'limits.offsetDeg.0', label: 'Offset window, lowest', unit: '°e', before: -15, after: -5 },
      { path: 'limits.offsetDeg.1', label: 'Offset window, highest', unit: '°e', before: 15, after: 5 },
    ]);
    const [v1] = await q<{ status: string; retired_at: Date | null }>(
      'select status, retired_at from recipes where id = $1',
      [line.recipe.id],
    );
    expect(v1.status).toBe('retired');
    expect(v1.retired_at).not.toBeNull();
    const model = (await api('quinn').get(`/api/models/${line.model.id}`)).body;
    expect(model.activeRecipe).toMatchObject({ id: draft.id, version: 2 });
  });

  it('a reviewer can send a version back to draft with a comment, and the author gets an e-mail', async () => {
    const { draft } = await modelWithDraft('LC-3');
    await narrowAndSubmit(draft);
    const noComment = await api('rosa').post(`/api/recipes/${draft.id}/send-back`, {});
    expect(noComment.status).toBe(400);
    const back = await api('rosa').post(`/api/recipes/${draft.id}/send-back`, {
      comment: 'Keep the low limit at −8 °e.',
    });
    expect(back.status).toBe(200);
    expect(back.body).toMatchObject({ status: 'draft', reviewComment: 'Keep the low limit at −8 °e.' });
    await expect
      .poll(() =>
        t.mail
          .messages()
          .some((m) => m.to.includes('evan.engineer@corvane.example') && /sent back/i.test(m.subject)),
      )
      .toBe(true);
  });

  it('submitting e-mails the other engineers, not the author', async () => {
    const { draft } = await modelWithDraft('LC-4');
    await narrowAndSubmit(draft, 'Mail check');
    await expect
      .poll(() =>
        t.mail
          .messages()
          .some((m) => m.to.includes('rosa.engineer@corvane.example') && m.text.includes('Mail check')),
      )
      .toBe(true);
    expect(
      t.mail
        .messages()
        .some((m) => m.to.includes('evan.engineer@corvane.example') && m.text.includes('Mail check')),
    ).toBe(false);
  });

  it('a released or retired version cannot be edited through the API, and the database refuses it too', async () => {
    const { line, draft } = await modelWithDraft('LC-5');
    const res = await api('evan').patch(`/api/recipes/${line.recipe.id}`, { body: draft.body, revision: 1 });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('recipes.not_a_draft');
    await expect(
      asOwner(`update recipes set body = jsonb_set(body, '{maxAttempts}', '9') where id = $1`, [
        line.recipe.id,
      ]),
    ).rejects.toThrow(/immutable/);
    await expect(
      asOwner(`update recipes set release_diff = '[]' where id = $1`, [line.recipe.id]),
    ).rejects.toThrow(/immutable/);
    await expect(asOwner('delete from recipes where id = $1', [line.recipe.id])).rejects.toThrow(
      /cannot be deleted/,
    );
    // The processes' own role may not delete a recipe at all.
    await expect(q('delete from recipes where id = $1', [line.recipe.id])).rejects.toThrow(
      /permission denied/,
    );
  });

  it('a version in review keeps the body the reviewer sees: saving it is refused until it is sent back', async () => {
    const { draft } = await modelWithDraft('LC-6');
    const inReview = await narrowAndSubmit(draft);
    const res = await api('evan').patch(`/api/recipes/${draft.id}`, {
      body: draft.body,
      revision: inReview.revision,
    });
    expect(res.status).toBe(409);
    await expect(
      q(`update recipes set body = jsonb_set(body, '{maxAttempts}', '9') where id = $1`, [draft.id]),
    ).rejects.toThrow(/in review/);
  });

  it('at most one version is in force per model: the database refuses a second released one', async () => {
    const { line, draft } = await modelWithDraft('LC-7');
    await expect(
      q(`update recipes set status = 'released', released_at = now() where id = $1`, [draft.id]),
    ).rejects.toThrow(/recipes_one_released_per_model/);
    expect(
      (await q('select 1 from recipes where model_id = $1 and status = $2', [line.model.id, 'released']))
        .length,
    ).toBe(1);
  });

  it("a draft's pole pairs must be the model's, with the error next to the field", async () => {
    const { draft } = await modelWithDraft('LC-8');
    const res = await api('evan').patch(`/api/recipes/${draft.id}`, {
      body: { ...draft.body, polePairs: draft.body.polePairs + 1 },
      revision: draft.revision,
    });
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toEqual([
      { path: 'body.polePairs', message: expect.stringMatching(/pole pairs/) },
    ]);
  });

  it('the same validation as the client: a minimum above its maximum is refused with the field named', async () => {
    const { draft } = await modelWithDraft('LC-9');
    const res = await api('evan').patch(`/api/recipes/${draft.id}`, {
      body: { ...draft.body, limits: { ...draft.body.limits, offsetDeg: [5, -5] } },
      revision: draft.revision,
    });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe('body.limits.offsetDeg');
  });
});

describe('single-person release (plant setting)', () => {
  it('with the setting on, the author may approve their own draft; by default they may not', async () => {
    const { draft } = await modelWithDraft('SP-1');
    await narrowAndSubmit(draft);
    const evan = (await findUserByUsername(t.deps.db, 'evan.engineer'))!;
    const actor = { ...evan, role: 'engineer' as const };
    await expect(approveVersion(recipeDeskContext(t.deps), actor, draft.id, {})).rejects.toMatchObject({
      code: 'recipes.own_draft',
    });
    const small = { ...recipeDeskContext(t.deps), singlePersonRelease: true };
    const released = await approveVersion(small, actor, draft.id, {});
    expect(released).toMatchObject({ status: 'released', releasedBy: { displayName: 'Evan Thorsby' } });
  });
});

describe('two people editing one draft', () => {
  it('the second save from the same revision gets a 409 naming who changed it and when; nothing is lost', async () => {
    const { draft } = await modelWithDraft('CC-1');
    t.setNow(new Date('2026-11-30T09:15:00Z'));
    const first = await api('evan').patch(`/api/recipes/${draft.id}`, {
      body: { ...draft.body, maxAttempts: 4 },
      revision: draft.revision,
    });
    expect(first.status).toBe(200);
    const second = await api('rosa').patch(`/api/recipes/${draft.id}`, {
      body: { ...draft.body, maxAttempts: 5 },
      revision: draft.revision,
    });
    t.setNow(null as unknown as Date);
    expect(second.status).toBe(409);
    expect(second.body.error.code).toBe('recipes.changed_meanwhile');
    expect(second.body.error.message).toContain('Evan Thorsby');
    expect(second.body.error.message).toContain('2026-11-30 09:15');
    const now = (await api('rosa').get(`/api/recipes/${draft.id}`)).body;
    expect(now.body.maxAttempts).toBe(4);
    expect(now.revision).toBe(2);
  });
});

describe('audit', () => {
  it('every step is audited with before, after and reason', async () => {
    const { draft } = await modelWithDraft('AU-1');
    await narrowAndSubmit(draft, 'Tighter window after the field returns');
    await api('rosa').post(`/api/recipes/${draft.id}/approve`, {});
    const rows = await q<{ action: string; reason: string | null; before: unknown; after: unknown }>(
      `select action, reason, before, after from audit_log where subject_id = $1 order by id`,
      [draft.id],
    );
    expect(rows.map((r) => r.action)).toEqual([
      'recipes.draft_created',
      'recipes.draft_saved',
      'recipes.submitted',
      'recipes.released',
    ]);
    const saved = rows[1];
    expect(saved.before).toMatchObject({
      revision: 1,
      changes: [
        { path: 'limits.offsetDeg.0', before: -15, after: -5 },
        { path: 'limits.offsetDeg.1', before: 15, after: 5 },
      ],
    });
    expect(saved.after).toMatchObject({ revision: 2, body: { limits: { offsetDeg: [-5, 5] } } });
    expect(rows[2].reason).toBe('Tighter window after the field returns');
    expect(rows[3]).toMatchObject({
      before: { status: 'in_review', versionInForce: 1 },
      after: { status: 'released', versionInForce: 2 },
    });
  });

  it('model changes are audited with before, after and the reason', async () => {
    const created = await api('evan').post('/api/models', {
      code: 'AU-M1',
      name: 'Audit motor',
      polePairs: 5,
      reason: 'New product for line 3',
    });
    expect(created.status).toBe(201);
    const changed = await api('evan').patch(`/api/models/${created.body.id}`, {
      code: 'AU-M1',
      name: 'Audit motor, 36 V',
      polePairs: 5,
      reason: 'Name after the voltage change',
    });
    expect(changed.status).toBe(200);
    const [row] = await q<{ reason: string; before: unknown; after: unknown }>(
      `select reason, before, after from audit_log where action = 'models.changed' and subject_id = $1`,
      [created.body.id],
    );
    expect(row).toEqual({
      reason: 'Name after the voltage change',
      before: { code: 'AU-M1', name: 'Audit motor', polePairs: 5 },
      after: { code: 'AU-M1', name: 'Audit motor, 36 V', polePairs: 5 },
    });
    const noReason = await api('evan').patch(`/api/models/${created.body.id}`, {
      code: 'AU-M1',
      name: 'x',
      polePairs: 5,
    });
    expect(noReason.status).toBe(400);
  });
});

describe('discarding a draft', () => {
  it('another engineer may discard a draft with a reason: it leaves the working list, its record stays, audited', async () => {
    const { line, draft } = await modelWithDraft('DD-1');
    const noReason = await api('rosa').post(`/api/recipes/${draft.id}/discard`, { revision: draft.revision });
    expect(noReason.status).toBe(400);
    t.setNow(new Date('2026-11-30T10:05:00Z'));
    const gone = await api('rosa').post(`/api/recipes/${draft.id}/discard`, {
      reason: 'Superseded by the window study',
      revision: draft.revision,
    });
    t.setNow(null as unknown as Date);
    expect(gone.status).toBe(200);
    expect(gone.body).toMatchObject({
      status: 'discarded',
      discardedBy: { displayName: 'Rosa Kettleby' },
      discardedAt: '2026-11-30T10:05:00.000Z',
      discardReason: 'Superseded by the window study',
    });
    const model = (await api('quinn').get(`/api/models/${line.model.id}`)).body;
    expect(model.versions.map((v: RecipeVersionView) => v.version)).toEqual([1]);
    expect(model.discarded.map((v: RecipeVersionView) => v.id)).toEqual([draft.id]);
    // The record stays, readable by id.
    expect((await api('olga').get(`/api/recipes/${draft.id}`)).body.status).toBe('discarded');
    const [audit] = await q<{ action: string; reason: string; before: unknown; after: unknown }>(
      `select action, reason, before, after from audit_log where subject_id = $1 and action = 'recipes.draft_discarded'`,
      [draft.id],
    );
    expect(audit).toMatchObject({
      reason: 'Superseded by the window study',
      before: { status: 'draft', revision: 1 },
      after: { status: 'discarded', revision: 2 },
    });
  });

  it('a discarded draft can no longer be saved, submitted or discarded again', async () => {
    const { draft } = await modelWithDraft('DD-2');
    await api('evan').post(`/api/recipes/${draft.id}/discard`, { reason: 'Wrong model', revision: 1 });
    const save = await api('evan').patch(`/api/recipes/${draft.id}`, { body: draft.body, revision: 2 });
    expect(save.status).toBe(409);
    expect(save.body.error.code).toBe('recipes.not_a_draft');
    expect(save.body.error.message).toContain('discarded');
    const submit = await api('evan').post(`/api/recipes/${draft.id}/submit`, { reason: 'Try', revision: 2 });
    expect(submit.status).toBe(409);
    const again = await api('rosa').post(`/api/recipes/${draft.id}/discard`, {
      reason: 'Again',
      revision: 2,
    });
    expect(again.status).toBe(409);
  });

  it('only drafts are discarded: a version in review or in force is refused; a stale revision gets the 409 naming who saved', async () => {
    const { line, draft } = await modelWithDraft('DD-3');
    const released = await api('evan').post(`/api/recipes/${line.recipe.id}/discard`, {
      reason: 'Not allowed',
      revision: 1,
    });
    expect(released.status).toBe(409);
    expect(released.body.error.code).toBe('recipes.not_a_draft');
    const saved = await api('evan').patch(`/api/recipes/${draft.id}`, {
      body: { ...draft.body, maxAttempts: 4 },
      revision: draft.revision,
    });
    expect(saved.status).toBe(200);
    const stale = await api('rosa').post(`/api/recipes/${draft.id}/discard`, {
      reason: 'Not needed',
      revision: draft.revision,
    });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe('recipes.changed_meanwhile');
    expect(stale.body.error.message).toContain('Evan Thorsby');
    await narrowAndSubmit((await api('evan').get(`/api/recipes/${draft.id}`)).body);
    const inReview = await api('rosa').post(`/api/recipes/${draft.id}/discard`, {
      reason: 'Late',
      revision: 4,
    });
    expect(inReview.status).toBe(409);
  });

  it('operators, quality and administrators may not discard a draft', async () => {
    const { draft } = await modelWithDraft('DD-4');
    for (const who of ['olga', 'quinn', 'ada'] as const) {
      const res = await api(who).post(`/api/recipes/${draft.id}/discard`, { reason: 'No', revision: 1 });
      expect(res.status).toBe(403);
    }
  });
});

describe('who may do what', () => {
  it('operators and quality read recipes; only engineers change them; admins manage nothing here', async () => {
    const { line, draft } = await modelWithDraft('RO-1');
    for (const who of ['olga', 'quinn', 'ada'] as const) {
      expect((await api(who).get(`/api/models/${line.model.id}`)).status).toBe(200);
      expect((await api(who).get(`/api/recipes/${draft.id}`)).status).toBe(200);
      const save = await api(who).patch(`/api/recipes/${draft.id}`, { body: draft.body, revision: 1 });
      expect(save.status).toBe(403);
      const copy = await api(who).post(`/api/models/${line.model.id}/recipes`, {
        fromRecipeId: line.recipe.id,
      });
      expect(copy.status).toBe(403);
    }
  });
});

describe('models', () => {
  it('lists code, name, pole pairs, hall layout, counts per turn, version in force, stations, units built and first-pass yield', async () => {
    const line = await createLineFixture(t.deps.db, { code: 'MD-1', stationName: 'EOL-MD-1' });
    // Two units measured for the first time: one passes, one fails (offset outside ±15 °e).
    for (const [serial, offsetDeg] of [
      ['MD1-001', 2],
      ['MD1-002', 40],
    ] as const) {
      const m = simulatedMeasurement(line.recipe.body, serial, { offsetDeg });
      expect(
        (await request(t.app).post('/api/station/measurements').set('X-Station-Key', line.key).send(m))
          .status,
      ).toBe(202);
      const [row] = await q<{ id: string }>('select id from measurements where measurement_id = $1', [
        m.measurementId,
      ]);
      await computeCalibration(
        { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock },
        { measurementPk: row.id, recipeId: line.recipe.id },
      );
    }
    const { models } = (await api('olga').get('/api/models')).body;
    expect(models.find((m: { code: string }) => m.code === 'MD-1')).toMatchObject({
      name: 'Test motor',
      polePairs: 4,
      hallLayout: '120° layout (A 0°, B 120°, C 240°)',
      countsPerTurn: 65536,
      activeRecipe: { version: 1 },
      stations: [{ name: 'EOL-MD-1' }],
      unitsBuilt: 2,
      firstPassYield7d: { firstMeasured: 2, passedFirst: 1, pct: 50 },
    });
  });
});

describe('stations use the version in force when the measurement arrived', () => {
  it('a measurement posted before a release is judged by the old version, one posted after by the new', async () => {
    const { line, draft } = await modelWithDraft('IF-1');
    const ctx = { db: t.deps.db, pool: t.deps.pool, queue: t.deps.queue, clock: t.deps.clock };
    const post = (serial: string) => {
      const m = simulatedMeasurement(line.recipe.body, serial, { offsetDeg: 9 });
      return request(t.app)
        .post('/api/station/measurements')
        .set('X-Station-Key', line.key)
        .send(m)
        .then((r) => {
          expect(r.status).toBe(202);
          return m.measurementId;
        });
    };
    const before = await post('IF1-BEFORE');
    await narrowAndSubmit(draft);
    // Still in review: not in force yet.
    const during = await post('IF1-DURING');
    expect((await api('rosa').post(`/api/recipes/${draft.id}/approve`, {})).status).toBe(200);
    const after = await post('IF1-AFTER');

    // Compute each one from the job the station's post enqueued, after the release, as the worker would.
    const judged = async (measurementId: string) => {
      const [job] = await q<{ data: { measurementPk: string; recipeId: string } }>(
        `select j.data from pgboss.job j join measurements m on m.id::text = j.data->>'measurementPk'
          where j.name = 'calibration-compute' and m.measurement_id = $1`,
        [measurementId],
      );
      await computeCalibration(ctx, job.data);
      const [cal] = await q<{ version: number; verdict: string }>(
        `select r.version, c.verdict from calibrations c join recipes r on r.id = c.recipe_id
          join measurements m on m.id = c.measurement_pk where m.measurement_id = $1`,
        [measurementId],
      );
      return cal;
    };
    // A true offset of 9 °e passes the ±15 °e window of v1 and fails the ±5 °e window of v2.
    expect(await judged(before)).toEqual({ version: 1, verdict: 'pass' });
    expect(await judged(during)).toEqual({ version: 1, verdict: 'pass' });
    expect(await judged(after)).toEqual({ version: 2, verdict: 'fail' });
  });
});
