import { createHash } from 'node:crypto';
import { strToU8, zipSync, type Zippable } from 'fflate';
import type { Db } from '#server/db/client';
import { travelerSettings } from '#server/env';
import type { SessionUser } from '#server/lib/auth';
import { insertAudit } from '../audit/audit.repository';
import { measurementsOfUnit } from '../measurements/measurements.repository';
import type { UnitRecord } from '#shared/schemas/unit-record';
import { renderUnitRecordPdf } from './unit-record.pdf';
import { unitRecord } from './unit-record.service';

// The two exports of a unit's record: its calibration record as a PDF, and a ZIP of that PDF with every
// measurement exactly as the station posted it and a manifest of SHA-256 sums. Each export is audited.

export interface RecordExportContext {
  db: Db;
  clock: () => Date;
}

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

/** A file name part that every archive tool and file system takes: letters, digits, '.', '_' and '-'. */
const safe = (s: string) => s.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 120);

async function audited(
  ctx: RecordExportContext,
  actor: SessionUser,
  record: UnitRecord,
  after: { format: 'pdf' | 'zip'; fileName: string; sha256: string; bytes: number; files?: number },
) {
  await insertAudit(ctx.db, {
    actorId: actor.id,
    actorName: actor.displayName,
    action: 'units.record_exported',
    subjectType: 'unit',
    subjectId: record.unit.id,
    after: { serial: record.unit.serial, ...after },
  });
}

export interface ExportedFile {
  bytes: Buffer;
  fileName: string;
  sha256: string;
}

/** The calibration record as a PDF (audited). */
export async function exportUnitRecordPdf(
  ctx: RecordExportContext,
  actor: SessionUser,
  serial: string,
): Promise<ExportedFile> {
  const now = ctx.clock();
  const record = await unitRecord(ctx.db, serial);
  const pdf = await renderUnitRecordPdf(record, now, travelerSettings().TRAVELER_TIME_ZONE);
  const file = {
    bytes: pdf,
    fileName: `${safe(record.unit.serial)}-calibration-record.pdf`,
    sha256: sha256(pdf),
  };
  await audited(ctx, actor, record, {
    format: 'pdf',
    fileName: file.fileName,
    sha256: file.sha256,
    bytes: pdf.length,
  });
  return file;
}

/** The name of the manifest of SHA-256 sums in the ZIP (the format `sha256sum -c` reads). */
export const MANIFEST_NAME = 'SHA256SUMS.txt';

/**
 * One ZIP with the calibration record PDF, every measurement exactly as posted (JSON or capture CSV) and
 * a manifest: `SHA256SUMS.txt` (a line "<sha256>  <path>" per file, so `sha256sum -c` checks them) and
 * `manifest.json` (what each file is, with the SHA-256 the intake stored). Audited.
 */
export async function exportUnitRecordZip(
  ctx: RecordExportContext,
  actor: SessionUser,
  serial: string,
): Promise<ExportedFile> {
  const now = ctx.clock();
  const record = await unitRecord(ctx.db, serial);
  const [pdf, bodies] = await Promise.all([
    renderUnitRecordPdf(record, now, travelerSettings().TRAVELER_TIME_ZONE),
    measurementsOfUnit(ctx.db, record.unit.id, true),
  ]);
  const folder = `${safe(record.unit.serial)}-record`;
  const files: { path: string; bytes: Uint8Array }[] = [
    { path: `${safe(record.unit.serial)}-calibration-record.pdf`, bytes: pdf },
  ];
  const measurements = bodies.map((m, i) => {
    const path = `measurements/${String(i + 1).padStart(3, '0')}-${safe(m.measurementId)}.${m.source === 'capture' ? 'csv' : 'json'}`;
    const bytes = strToU8(m.payloadRaw ?? '');
    files.push({ path, bytes });
    const view = record.measurements.find((x) => x.measurementId === m.measurementId);
    return {
      file: path,
      sha256: sha256(bytes),
      bytes: bytes.length,
      measurementId: m.measurementId,
      station: view?.stationName ?? null,
      operator: view?.operatorName ?? null,
      source: m.source,
      receivedAt: m.receivedAt.toISOString(),
      storedSha256: m.payloadSha256,
    };
  });
  const sums = files.map((f) => `${sha256(f.bytes)}  ${f.path}`).join('\n') + '\n';
  const manifest = {
    serial: record.unit.serial,
    generatedAt: now.toISOString(),
    generatedBy: actor.displayName,
    record: { file: files[0].path, sha256: sha256(pdf), bytes: pdf.length },
    measurements,
    note:
      'sha256 is of each file exactly as in this archive (the body as the station posted it). storedSha256 is ' +
      'the hash the intake stored: of the posted JSON in the schema key order, or of the timings rebuilt from a ' +
      'capture CSV; the unit page verifies it.',
  };
  const mtime = now;
  const tree: Zippable = {};
  for (const f of [
    ...files,
    { path: MANIFEST_NAME, bytes: strToU8(sums) },
    { path: 'manifest.json', bytes: strToU8(JSON.stringify(manifest, null, 2) + '\n') },
  ])
    // PDFs and CSV captures are stored deflated; the PDF's streams are already compressed.
    tree[`${folder}/${f.path}`] = [f.bytes, { mtime, level: f.path.endsWith('.pdf') ? 0 : 6 }];
  const zip = Buffer.from(zipSync(tree));
  const file = { bytes: zip, fileName: `${folder}.zip`, sha256: sha256(zip) };
  await audited(ctx, actor, record, {
    format: 'zip',
    fileName: file.fileName,
    sha256: file.sha256,
    bytes: zip.length,
    files: files.length,
  });
  return file;
}
