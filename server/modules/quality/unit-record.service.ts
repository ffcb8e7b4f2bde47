import type { DbOrTx } from '#server/db/client';
import { auditOfSubjects } from '../audit/audit.repository';
import { calibrationViews } from '../read-models/calibration-views';
import { measurementsOfUnit } from '../measurements/measurements.repository';
import { programmingOfCalibrations } from '../calibrations/calibrations.repository';
import { qualificationUseOfUnit } from '../qualification/reference-units.service';
import { releasedRecipe } from '../recipes/recipes.repository';
import { stationNamesByIds } from '../stations/stations.service';
import { listTravelerDocsOfUnit } from '../travelers/travelers.repository';
import { findUnitBySerial, unitView } from '../units/units.service';
import { unitErrors } from '../units/units.errors';
import { displayNamesByIds } from '../users/users.repository';
import { investigationReference } from '#shared/schemas/quality';
import type {
  MeasurementFile,
  RecordRecipe,
  TimelineEntry,
  TimelineKind,
  UnitRecord,
} from '#shared/schemas/unit-record';
import { formatOffsetDeg } from '#shared/wording';
import { holdsOfUnit, investigationsOfUnit } from './unit-record.repository';
import {
  AUDIT_WORDS,
  calibrationEntry,
  modelName,
  DISPOSITION_WORDS,
  HOLD_SOURCE_WHO,
  recipeLimitLines,
  SOURCE_WORDS,
} from './unit-record.wording';

// A unit's whole record, read through each owning module's functions (three rounds of parallel queries:
// the unit; what hangs off it; what hangs off its calibrations and measurements, with the names).

/** Everything that happened to one unit, oldest first, with names instead of ids. */
export async function unitRecord(db: DbOrTx, serial: string): Promise<UnitRecord> {
  const row = await findUnitBySerial(db, serial);
  if (!row) throw unitErrors.notFound(serial);
  const [unit, newestFirst, measured, holds, linked, docs, qualification] = await Promise.all([
    unitView(db, row),
    calibrationViews(db, { unitId: row.id, limit: 1000 }),
    measurementsOfUnit(db, row.id),
    holdsOfUnit(db, row.id),
    investigationsOfUnit(db, row.id),
    listTravelerDocsOfUnit(db, row.id),
    qualificationUseOfUnit(db, row.id),
  ]);
  const calibrations = [...newestFirst].reverse();
  const calibrationIds = calibrations.map((c) => c.calibrationId);
  const recipeIds = [...new Set(calibrations.map((c) => c.recipe.id))];
  // Operators and who linked the unit are known now; programming stations are the measuring stations.
  const personIds = new Set<string>();
  for (const m of measured) if (m.operatorId) personIds.add(m.operatorId);
  for (const l of linked) if (l.addedBy) personIds.add(l.addedBy);
  const [programming, audit, recipeRows, people, stationNames] = await Promise.all([
    programmingOfCalibrations(db, calibrationIds),
    auditOfSubjects(db, [
      { type: 'unit', ids: [row.id] },
      { type: 'calibration', ids: calibrationIds },
      { type: 'measurement', ids: measured.map((m) => m.measurementId) },
    ]),
    // Released versions are immutable and cached per process.
    Promise.all(recipeIds.map((id) => releasedRecipe(db, id))),
    displayNamesByIds(db, [...personIds]),
    stationNamesByIds(db, [
      ...new Set([...measured.map((m) => m.stationId), ...calibrations.map((c) => c.stationId)]),
    ]),
  ]);
  // Audit entries keep the actor's name; only an entry without one needs a look-up.
  const unnamed = [
    ...new Set(
      audit.filter((a) => a.actorId && !a.actorName && !people.has(a.actorId)).map((a) => a.actorId!),
    ),
  ];
  if (unnamed.length) for (const [id, name] of await displayNamesByIds(db, unnamed)) people.set(id, name);
  const person = (id: string | null) => (id ? (people.get(id) ?? null) : null);
  const stationName = (id: string) => stationNames.get(id) ?? 'unknown station';
  const calById = new Map(calibrations.map((c) => [c.calibrationId, c]));
  const stationCalOf = new Map(
    calibrations.filter((c) => c.purpose === 'station').map((c) => [c.measurementId, c]),
  );

  const timeline: TimelineEntry[] = [];
  const add = (
    kind: TimelineKind,
    at: Date | string,
    title: string,
    rest: Partial<Omit<TimelineEntry, 'kind' | 'at' | 'title'>> = {},
  ) =>
    timeline.push({
      at: typeof at === 'string' ? at : at.toISOString(),
      kind,
      title,
      who: rest.who ?? null,
      details: rest.details ?? [],
      tone: rest.tone ?? 'neutral',
      failedChecks: rest.failedChecks ?? [],
      measurementId: rest.measurementId ?? null,
    });

  const registeredBy = audit.find((a) => a.action === 'units.registered' && a.subjectId === row.id);
  add('registered', row.createdAt, `Registered as ${modelName(unit.model)}`, {
    who: registeredBy ? (registeredBy.actorName ?? person(registeredBy.actorId)) : null,
    details: [
      {
        label: 'How',
        value: registeredBy ? 'registered on screen' : 'imported from a work order or by the line',
      },
      { label: 'Work order', value: unit.workOrder ?? '—' },
      { label: 'Hall-board lot', value: unit.lots.hallBoard ?? '—' },
      { label: 'Magnet-ring lot', value: unit.lots.magnetRing ?? '—' },
      { label: 'Stator lot', value: unit.lots.stator ?? '—' },
    ],
  });

  const files: MeasurementFile[] = measured.map((m) => ({
    measurementId: m.measurementId,
    stationName: stationName(m.stationId),
    operatorName: person(m.operatorId),
    source: m.source,
    receivedAt: m.receivedAt.toISOString(),
    payloadSha256: m.payloadSha256,
    chars: m.chars,
  }));
  files.forEach((f) => {
    const cal = stationCalOf.get(f.measurementId);
    const attempt = cal?.attempt ? `, attempt ${cal.attempt}` : '';
    add('measurement', f.receivedAt, `Measured at ${f.stationName}${attempt}`, {
      who: f.operatorName,
      details: [
        { label: 'Operator at the panel', value: f.operatorName ?? 'not recorded' },
        { label: 'Data', value: SOURCE_WORDS[f.source] },
        { label: 'Measurement', value: f.measurementId },
        { label: 'SHA-256 as stored', value: f.payloadSha256 },
      ],
      measurementId: f.measurementId,
    });
  });

  const recomputedBy = new Map<string, string | null>();
  for (const a of audit)
    if (a.action === 'calibrations.recomputed') {
      const id = (a.after as { calibrationId?: string } | null)?.calibrationId;
      if (id) recomputedBy.set(id, a.actorName ?? person(a.actorId));
    }
  for (const c of calibrations)
    timeline.push(
      calibrationEntry(
        c,
        // A station result is computed for the station; nobody pressed a key.
        c.purpose === 'station'
          ? `${c.stationName} (automatic)`
          : (recomputedBy.get(c.calibrationId) ?? null),
      ),
    );

  for (const p of programming) {
    const station = stationName(p.stationId);
    const cal = calById.get(p.calibrationId);
    add(
      'programming',
      p.confirmedAt,
      p.matches
        ? `Offset written and read back at ${station}: ${p.readBackCounts} counts, confirmed`
        : `Programming read-back MISMATCH at ${station}: expected ${p.expectedCounts}, written ${p.writtenCounts}, read back ${p.readBackCounts} counts`,
      {
        who: station,
        tone: p.matches ? 'good' : 'bad',
        details: [
          { label: 'Expected (counts)', value: String(p.expectedCounts) },
          { label: 'Written (counts)', value: String(p.writtenCounts) },
          { label: 'Read back (counts)', value: String(p.readBackCounts) },
          { label: 'Checksum', value: p.checksum ?? '—' },
          { label: 'For', value: cal ? `attempt ${cal.attempt ?? '—'} (${cal.measurementId})` : '—' },
        ],
        measurementId: cal?.measurementId ?? null,
      },
    );
  }

  for (const { hold, investigationNumber } of holds) {
    const investigation = investigationNumber ? investigationReference(investigationNumber) : null;
    add('hold', hold.heldAt, `Put on hold: ${hold.reason}`, {
      who: hold.heldByName ?? (hold.source === 'person' ? null : HOLD_SOURCE_WHO[hold.source]),
      tone: 'warn',
      details: investigation ? [{ label: 'Investigation', value: investigation }] : [],
    });
    if (hold.releasedAt && hold.disposition) {
      const details = [{ label: 'Reason', value: hold.releaseReason ?? '—' }];
      if (hold.attemptBudget !== null)
        details.push({ label: 'New attempt budget', value: String(hold.attemptBudget) });
      add(
        'release',
        hold.releasedAt,
        `Released with the disposition "${DISPOSITION_WORDS[hold.disposition]}"`,
        {
          who: hold.releasedByName,
          tone: hold.disposition === 'scrap' ? 'bad' : 'good',
          details,
        },
      );
    }
  }

  for (const d of docs)
    add(
      'traveler',
      d.createdAt,
      d.printNumber === 1
        ? `Traveler made (print 1, the original, ${d.pageSize === 'A4' ? 'A4' : 'US Letter'})`
        : `Traveler reprint ${d.printNumber - 1} made (${d.pageSize === 'A4' ? 'A4' : 'US Letter'})`,
      { details: [{ label: 'SHA-256', value: d.sha256 }] },
    );

  for (const l of linked)
    add('investigation', l.addedAt, `Linked to ${investigationReference(l.number)}: ${l.title}`, {
      who: person(l.addedBy),
      details: [{ label: 'Case status now', value: l.status }],
    });

  if (qualification.reference) {
    const r = qualification.reference;
    add('qualification', r.createdAt, 'Kept as a reference unit for station qualification', {
      details: [
        {
          label: 'Certified offset',
          value: r.certifiedOffsetDeg === null ? 'not certified yet' : formatOffsetDeg(r.certifiedOffsetDeg),
        },
        { label: 'Tolerance', value: `± ${r.toleranceDeg} °e` },
        { label: 'Qualification readings', value: String(r.readings) },
        { label: 'Retired', value: r.retiredAt ? r.retiredAt.toISOString() : 'no' },
      ],
    });
  }
  for (const s of qualification.studies)
    add('qualification', s.createdAt, `A part of the gauge study "${s.name}" (${s.status})`);

  for (const a of audit) {
    const after = a.after as { format?: string; printNumber?: number } | null;
    const print = a.action === 'travelers.printed' || a.action === 'travelers.reprinted';
    let title = AUDIT_WORDS[a.action] ?? a.action;
    if (a.action === 'units.record_exported' && after?.format)
      title = `${title} (${after.format === 'zip' ? 'PDF and raw files, ZIP' : 'PDF'})`;
    if (print && after?.printNumber) title = `${title} (print no. ${after.printNumber})`;
    const details = [{ label: 'Action', value: a.action }];
    if (a.reason) details.unshift({ label: 'Reason', value: a.reason });
    add(print ? 'print' : 'audit', a.at, title, {
      who: a.actorName ?? person(a.actorId) ?? 'the line (automatic)',
      details,
    });
  }

  // Oldest first; at the same instant, the order things happen in (registration, measurement, result…).
  const order = new Map<TimelineKind, number>(
    [
      'registered',
      'measurement',
      'calibration',
      'recomputation',
      'programming',
      'hold',
      'release',
      'traveler',
      'print',
      'investigation',
      'qualification',
      'audit',
    ].map((k, i) => [k as TimelineKind, i]),
  );
  timeline.sort((a, b) => a.at.localeCompare(b.at) || order.get(a.kind)! - order.get(b.kind)!);

  const recipes: RecordRecipe[] = [...recipeRows]
    .sort((a, b) => a.version - b.version)
    .map((r) => ({
      id: r.id,
      version: r.version,
      name: r.body.name ?? null,
      limits: recipeLimitLines(r.body),
    }));

  return {
    unit,
    timeline,
    calibrations,
    measurements: files,
    programming: programming.map((p) => ({
      calibrationId: p.calibrationId,
      stationName: stationName(p.stationId),
      expectedCounts: p.expectedCounts,
      writtenCounts: p.writtenCounts,
      readBackCounts: p.readBackCounts,
      checksum: p.checksum,
      matches: p.matches,
      confirmedAt: p.confirmedAt.toISOString(),
    })),
    holds: holds.map(({ hold, investigationNumber }) => ({
      reason: hold.reason,
      source: hold.source,
      heldBy: hold.heldByName ?? (hold.source === 'person' ? 'not recorded' : HOLD_SOURCE_WHO[hold.source]),
      heldAt: hold.heldAt.toISOString(),
      investigation: investigationNumber ? investigationReference(investigationNumber) : null,
      releasedAt: hold.releasedAt?.toISOString() ?? null,
      releasedBy: hold.releasedByName,
      disposition: hold.disposition,
      releaseReason: hold.releaseReason,
      attemptBudget: hold.attemptBudget,
    })),
    recipes,
    investigations: linked.map((l) => ({
      id: l.id,
      reference: investigationReference(l.number),
      title: l.title,
      status: l.status,
    })),
  };
}
