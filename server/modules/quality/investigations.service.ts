import type { DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { listUsers } from '../users/users.repository';
import { unitIdsBySerials, unitSummariesByIds } from '../units/units.repository';
import {
  INVESTIGATION_STATUSES,
  investigationReference,
  type InvestigationDetail,
  type InvestigationSummary,
  type InvestigationUpdate,
  type NewInvestigation,
} from '#shared/schemas/quality';
import { qualityErrors } from './quality.errors';
import * as repo from './quality.repository';
import type { InvestigationRecord } from './quality.table';
import type { QualityContext } from './quality.service';

/** Opens a case inside the caller's transaction (audited); the caller mails the quality group after commit. */
export async function openInvestigationIn(
  tx: DbOrTx,
  actor: SessionUser,
  input: NewInvestigation,
  now: Date,
): Promise<InvestigationRecord> {
  const row = await repo.insertInvestigation(tx, {
    title: input.title,
    customerRef: input.customerRef ?? null,
    symptom: input.symptom ?? null,
    receivedOn: input.receivedOn ?? null,
    openedBy: actor.id,
    openedByName: actor.displayName,
    createdAt: now,
    updatedAt: now,
  });
  await insertAudit(tx, {
    actorId: actor.id,
    actorName: actor.displayName,
    action: 'investigations.opened',
    subjectType: 'investigation',
    subjectId: row.id,
    after: { reference: investigationReference(row.number), title: row.title, customerRef: row.customerRef },
  });
  return row;
}

/**
 * Tells every active quality account with an e-mail address that a case opened or closed. The case
 * stands even when a mail cannot be sent (the outbox shows what went out).
 */
export async function notifyQualityGroup(
  ctx: QualityContext,
  inv: InvestigationRecord,
  event: 'opened' | 'closed',
): Promise<void> {
  const ref = investigationReference(inv.number);
  const people = (await listUsers(ctx.db)).filter((u) => u.role === 'quality' && !u.disabled && u.email);
  for (const p of people) {
    await ctx.mailer
      .send({
        to: p.email!,
        subject: `Investigation ${ref} ${event}: ${inv.title}`,
        text: [
          `Hello ${p.displayName},`,
          '',
          event === 'opened'
            ? `${inv.openedByName ?? 'Someone'} opened investigation ${ref}: ${inv.title}.`
            : `Investigation ${ref} (${inv.title}) is closed.`,
          inv.customerRef ? `Customer reference: ${inv.customerRef}` : '',
          inv.symptom && event === 'opened' ? `Symptom: ${inv.symptom}` : '',
          event === 'closed' && inv.rootCause ? `Root cause: ${inv.rootCause}` : '',
          '',
          `${ctx.publicUrl}/quality/investigations/${inv.id}`,
        ]
          .filter((l, i, all) => l !== '' || all[i - 1] !== '')
          .join('\n'),
      })
      .catch((e: unknown) => ctx.logger.warn({ err: e, to: p.email }, 'investigation mail not sent'));
  }
}

export async function createInvestigation(
  ctx: QualityContext,
  actor: SessionUser,
  input: NewInvestigation,
): Promise<InvestigationDetail> {
  const row = await ctx.db.transaction((tx) => openInvestigationIn(tx, actor, input, ctx.clock()));
  await notifyQualityGroup(ctx, row, 'opened');
  return investigationDetail(ctx, row.id);
}

function summary(inv: InvestigationRecord, unitCount: number): InvestigationSummary {
  return {
    id: inv.id,
    reference: investigationReference(inv.number),
    title: inv.title,
    customerRef: inv.customerRef,
    status: inv.status,
    openedBy: inv.openedByName,
    createdAt: inv.createdAt.toISOString(),
    unitCount,
  };
}

export async function listInvestigations(ctx: Pick<QualityContext, 'db'>): Promise<InvestigationSummary[]> {
  const rows = await repo.listInvestigationRows(ctx.db);
  return rows.map((r) => summary(r.inv, r.unitCount));
}

export async function investigationDetail(
  ctx: Pick<QualityContext, 'db'>,
  id: string,
): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(ctx.db, id);
  if (!inv) throw qualityErrors.investigationNotFound();
  const ids = await repo.linkedUnitIds(ctx.db, id);
  const byId = await unitSummariesByIds(ctx.db, ids);
  const comments = await repo.commentsOf(ctx.db, id);
  return {
    ...summary(inv, ids.length),
    symptom: inv.symptom,
    receivedOn: inv.receivedOn,
    findings: inv.findings,
    containmentAction: inv.containmentAction,
    rootCause: inv.rootCause,
    correctiveAction: inv.correctiveAction,
    verification: inv.verification,
    closedAt: inv.closedAt?.toISOString() ?? null,
    units: ids
      .map((u) => byId.get(u))
      .filter((u) => u !== undefined)
      .map((u) => ({ serial: u.serial, status: u.status, holdReason: u.holdReason })),
    comments: comments.map((c) => ({
      id: c.id,
      author: c.authorName,
      body: c.body,
      createdAt: c.createdAt.toISOString(),
    })),
  };
}

/** Edits a case's fields and moves its status forward (open → contained → closed); closed is final. */
export async function updateInvestigation(
  ctx: QualityContext,
  actor: SessionUser,
  id: string,
  input: InvestigationUpdate,
): Promise<InvestigationDetail> {
  const now = ctx.clock();
  const { before, after } = await ctx.db.transaction(async (tx) => {
    const before = await repo.findInvestigation(tx, id, true);
    if (!before) throw qualityErrors.investigationNotFound();
    if (before.status === 'closed')
      throw qualityErrors.investigationClosed(investigationReference(before.number));
    if (
      input.status &&
      INVESTIGATION_STATUSES.indexOf(input.status) < INVESTIGATION_STATUSES.indexOf(before.status)
    )
      throw qualityErrors.statusBackwards(before.status, input.status);
    const { status, ...fields } = input;
    const after = await repo.updateInvestigationRow(tx, id, {
      ...fields,
      ...(status ? { status } : {}),
      ...(status === 'closed' ? { closedAt: now } : {}),
      updatedAt: now,
    });
    const changed = Object.keys(input) as (keyof InvestigationUpdate)[];
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: status && status !== before.status ? `investigations.${status}` : 'investigations.updated',
      subjectType: 'investigation',
      subjectId: id,
      before: Object.fromEntries(changed.map((k) => [k, before[k] ?? null])),
      after: Object.fromEntries(changed.map((k) => [k, after[k] ?? null])),
    });
    return { before, after };
  });
  if (after.status === 'closed' && before.status !== 'closed') await notifyQualityGroup(ctx, after, 'closed');
  return investigationDetail(ctx, id);
}

export async function addComment(
  ctx: QualityContext,
  actor: SessionUser,
  id: string,
  body: string,
): Promise<InvestigationDetail> {
  await ctx.db.transaction(async (tx) => {
    const inv = await repo.findInvestigation(tx, id);
    if (!inv) throw qualityErrors.investigationNotFound();
    const c = await repo.insertComment(tx, {
      investigationId: id,
      authorId: actor.id,
      authorName: actor.displayName,
      body,
      createdAt: ctx.clock(),
    });
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'investigations.commented',
      subjectType: 'investigation',
      subjectId: id,
      after: { commentId: c.id },
    });
  });
  return investigationDetail(ctx, id);
}

/** Links units (by serial) to a case without holding them, e.g. units that share a returned unit's lot. */
export async function linkUnitsToInvestigation(
  ctx: QualityContext,
  actor: SessionUser,
  id: string,
  serials: string[],
): Promise<InvestigationDetail> {
  await ctx.db.transaction(async (tx) => {
    const inv = await repo.findInvestigation(tx, id);
    if (!inv) throw qualityErrors.investigationNotFound();
    if (inv.status === 'closed') throw qualityErrors.investigationClosed(investigationReference(inv.number));
    const found = await unitIdsBySerials(tx, serials);
    const missing = serials.filter((s) => !found.has(s));
    if (missing.length) throw qualityErrors.unknownSerials(missing);
    await repo.linkUnits(tx, id, [...found.values()], actor.id);
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'investigations.units_linked',
      subjectType: 'investigation',
      subjectId: id,
      after: { serials },
    });
  });
  return investigationDetail(ctx, id);
}
