import type { DbOrTx } from '#server/db/client';
import type { AuditEntry } from '#shared/schemas/audit';
import { stationNamesByIds } from '../stations/stations.service';
import { serialsByIds } from '../units/units.service';
import { displayNamesByIds } from '../users/users.repository';
import { listAudit, listAuditFiltered } from './audit.repository';
import { unitIdsBySerials } from '../units/units.repository';
import { investigationIdsOfUnit, investigationLabelsByIds } from '../quality/investigation-labels';
import { QUALITY_AUDIT_SUBJECTS, type AuditTrailQuery } from '#shared/schemas/audit-trail';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function serialIn(value: unknown): string | null {
  const serial = (value as { serial?: unknown } | null)?.serial;
  return typeof serial === 'string' ? serial : null;
}

/**
 * The newest audit entries as people read them: who acted, by name (the entry's own name, else the
 * account's current name), and what it was about in words (a person's name, a unit's serial, a
 * station's name) beside the stored id.
 */
export async function auditEntries(db: DbOrTx, limit: number): Promise<AuditEntry[]> {
  return readable(db, await listAudit(db, limit));
}

/**
 * Quality's audit trail: entries about units, investigations, calibrations, measurements and recipes
 * (not accounts or sign-ins), filtered by unit, person, action and time, with names in place of ids
 * (a case is named by its reference and title). A unit's trail also holds the entries of the cases
 * it is linked to that name it (linked to a case, held under it).
 */
export async function auditTrail(db: DbOrTx, q: AuditTrailQuery): Promise<AuditEntry[]> {
  let unit: { id: string; serial: string; caseIds: string[] } | undefined;
  if (q.serial) {
    const id = (await unitIdsBySerials(db, [q.serial])).get(q.serial);
    if (!id) return [];
    unit = { id, serial: q.serial, caseIds: await investigationIdsOfUnit(db, id) };
  }
  const rows = await listAuditFiltered(db, {
    subjectTypes: q.serial ? ['unit', 'investigation'] : QUALITY_AUDIT_SUBJECTS,
    unit,
    person: q.person,
    action: q.action,
    from: q.from,
    to: q.to,
    limit: q.limit,
  });
  // The trail is for people: an IP address stays in the administrators' view.
  return (await readable(db, rows)).map((e) => ({ ...e, ip: null }));
}

async function readable(db: DbOrTx, rows: Awaited<ReturnType<typeof listAudit>>): Promise<AuditEntry[]> {
  const ids = (type: string | null) => [
    ...new Set(
      rows
        .filter((r) => r.subjectType === type && r.subjectId && UUID.test(r.subjectId))
        .map((r) => r.subjectId!),
    ),
  ];
  const actorIds = [...new Set(rows.filter((r) => !r.actorName && r.actorId).map((r) => r.actorId!))];
  const [people, unitSerials, stationNames, cases] = await Promise.all([
    displayNamesByIds(db, [...new Set([...actorIds, ...ids('user')])]),
    serialsByIds(db, ids('unit')),
    stationNamesByIds(db, ids('station')),
    investigationLabelsByIds(db, ids('investigation')),
  ]);
  return rows.map((r) => {
    const id = r.subjectId ?? '';
    const subjectLabel =
      r.subjectType === 'user'
        ? (people.get(id) ?? null)
        : r.subjectType === 'unit'
          ? (unitSerials.get(id) ?? null)
          : r.subjectType === 'station'
            ? (stationNames.get(id) ?? null)
            : r.subjectType === 'investigation'
              ? (cases.get(id) ?? null)
              : (serialIn(r.after) ?? serialIn(r.before));
    return {
      id: Number(r.id),
      at: r.at.toISOString(),
      actorId: r.actorId,
      actorName: r.actorName ?? (r.actorId ? (people.get(r.actorId) ?? null) : null),
      action: r.action,
      subjectType: r.subjectType,
      subjectId: r.subjectId,
      subjectLabel: subjectLabel
        ? r.subjectType === 'calibration' || r.subjectType === 'measurement'
          ? `unit ${subjectLabel}`
          : subjectLabel
        : null,
      reason: r.reason,
      before: r.before,
      after: r.after,
      ip: r.ip,
    };
  });
}
