import { and, desc, eq, inArray } from 'drizzle-orm';
import type { Db, DbOrTx } from '#server/db/client';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { findModelWithActiveRecipe } from '../recipes/recipes.repository';
import { findStation } from '../stations/stations.service';
import { findUserById } from '../users/users.repository';
import type { AlertView } from '#shared/schemas/alerts';
import { alertSubscriptions, chartAlerts, watchedCharts } from './alerts.table';
import { alertErrors } from './alerts.errors';
import { CHART_LABELS } from './alerts.service';

// The engineers' list of alerts: reading, acknowledging, and who is mailed when one opens.

export async function listAlerts(
  db: DbOrTx,
  q: { status: 'open' | 'acknowledged' | 'all'; stationId?: string; limit: number },
): Promise<AlertView[]> {
  const where = [];
  if (q.status !== 'all') where.push(eq(chartAlerts.status, q.status));
  if (q.stationId) where.push(eq(watchedCharts.stationId, q.stationId));
  const rows = await db
    .select({
      alert: chartAlerts,
      kind: watchedCharts.kind,
      stationId: watchedCharts.stationId,
      modelId: watchedCharts.modelId,
    })
    .from(chartAlerts)
    .innerJoin(watchedCharts, eq(watchedCharts.id, chartAlerts.chartId))
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(chartAlerts.raisedAt))
    .limit(q.limit);
  // Names come from the modules that own stations, models and people.
  const names = new Map<string, string>();
  for (const id of new Set(rows.map((r) => r.stationId)))
    names.set(id, (await findStation(db, id))?.name ?? 'Unknown station');
  for (const id of new Set(rows.map((r) => r.modelId)))
    names.set(id, (await findModelWithActiveRecipe(db, id))?.model.code ?? 'Unknown model');
  for (const id of new Set(rows.map((r) => r.alert.acknowledgedBy).filter((x): x is string => !!x)))
    names.set(id, (await findUserById(db, id))?.displayName ?? 'Unknown person');
  return rows.map((r) => ({
    id: r.alert.id,
    chart: r.kind,
    chartLabel: CHART_LABELS[r.kind],
    stationId: r.stationId,
    station: names.get(r.stationId)!,
    modelId: r.modelId,
    model: names.get(r.modelId)!,
    rule: r.alert.rule,
    ruleText: r.alert.ruleText,
    status: r.alert.status,
    hits: r.alert.hits,
    points: r.alert.points,
    raisedAt: r.alert.raisedAt.toISOString(),
    lastHitAt: r.alert.lastHitAt.toISOString(),
    acknowledgedBy: r.alert.acknowledgedBy ? names.get(r.alert.acknowledgedBy)! : null,
    acknowledgedAt: r.alert.acknowledgedAt?.toISOString() ?? null,
    comment: r.alert.comment,
  }));
}

export async function acknowledgeAlert(
  db: Db,
  clock: () => Date,
  actor: SessionUser,
  alertId: string,
  comment: string,
): Promise<void> {
  await db.transaction(async (tx) => {
    const [alert] = await tx.select().from(chartAlerts).where(eq(chartAlerts.id, alertId)).for('update');
    if (!alert) throw alertErrors.notFound();
    if (alert.status !== 'open') throw alertErrors.notOpen();
    const now = clock();
    await tx
      .update(chartAlerts)
      .set({ status: 'acknowledged', acknowledgedBy: actor.id, acknowledgedAt: now, comment })
      .where(eq(chartAlerts.id, alertId));
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'alerts.acknowledged',
      subjectType: 'chart_alert',
      subjectId: alertId,
      reason: comment,
      before: { status: 'open', rule: alert.rule },
      after: { status: 'acknowledged' },
    });
  });
}

export async function setSubscription(db: Db, actor: SessionUser, subscribed: boolean): Promise<boolean> {
  if (subscribed) await db.insert(alertSubscriptions).values({ userId: actor.id }).onConflictDoNothing();
  else await db.delete(alertSubscriptions).where(eq(alertSubscriptions.userId, actor.id));
  await insertAudit(db, {
    actorId: actor.id,
    actorName: actor.displayName,
    action: subscribed ? 'alerts.subscribed' : 'alerts.unsubscribed',
    subjectType: 'user',
    subjectId: actor.id,
  });
  return subscribed;
}

export async function isSubscribed(db: DbOrTx, userId: string): Promise<boolean> {
  const rows = await db
    .select()
    .from(alertSubscriptions)
    .where(inArray(alertSubscriptions.userId, [userId]));
  return rows.length > 0;
}
