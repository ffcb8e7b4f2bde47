import { createHash, randomBytes } from 'node:crypto';
import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { z } from 'zod';
import type pg from 'pg';
import type { Db, DbOrTx } from '#server/db/client';
import { namedStatement } from '#server/db/statement';
import type { SessionUser, StationPrincipal } from '#server/lib/auth';
import { stationErrors } from './stations.errors';
import { insertAudit } from '../audit/audit.repository';
import { existingModelIds, listModelRows } from '../recipes/recipes.repository';
import { displayNamesByIds } from '../users/users.repository';
import type { StationView } from '#shared/schemas/stations';
import { createStationSchema, updateStationSchema } from '#shared/schemas/stations';
import { stationKeys, stations, type StationRecord } from './stations.table';

export const STATION_KEY_PREFIX = 'pwsk_';

export function hashStationKey(key: string): string {
  return createHash('sha256').update(key).digest('hex');
}

/**
 * Keys seen recently, so a busy station's every request does not cost a lookup. An entry lives
 * KEY_CACHE_MS; revoking a key clears this process's cache at once (other server processes notice
 * within KEY_CACHE_MS).
 */
const KEY_CACHE_MS = 10_000;
const keyCache = new Map<string, { principal: StationPrincipal; fetchedAt: number; seenWrittenAt: number }>();

export function forgetCachedStationKeys(): void {
  keyCache.clear();
}

/** How often a busy station's "last seen" (and its key's "last used") is written at most. */
const SEEN_WRITE_MS = 5000;

/**
 * The key's lookup, which writes "last used" and the station's "last seen" with it, and the write alone
 * for a cached key: named prepared statements, planned once per connection (they run for every station
 * every few seconds, and planning the lookup cost more than running it).
 */
const keyLookupStatement = namedStatement<{ now: Date; hash: string }>(
  `with k as (
     update station_keys set last_used_at = $now where key_hash = $hash and revoked_at is null
     returning id, station_id
   ), s as (
     update stations set last_seen_at = $now from k where stations.id = k.station_id returning stations.id, stations.name
   )
   select k.id as "keyId", s.id as "stationId", s.name as "stationName" from k join s on s.id = k.station_id`,
);
const seenStatement = namedStatement<{ now: Date; stationId: string; keyId: string }>(
  `with s as (update stations set last_seen_at = $now where stations.id = $stationId)
   update station_keys set last_used_at = $now where station_keys.id = $keyId`,
);

/**
 * Resolves an X-Station-Key header to its station, or null when no key is valid. Marks the station seen.
 * Each costs one statement when it costs any: the lookup of a key not cached writes "last seen" with it,
 * and a cached key's station and key rows are written together, at most every SEEN_WRITE_MS.
 */
export async function authenticateStationKey(
  pool: pg.Pool,
  key: string,
  now: Date,
): Promise<StationPrincipal | null> {
  const hash = hashStationKey(key);
  const t = now.getTime();
  let entry = keyCache.get(hash);
  if (!entry || t - entry.fetchedAt > KEY_CACHE_MS || t < entry.fetchedAt) {
    const { rows } = await pool.query<{ keyId: string; stationId: string; stationName: string }>(
      keyLookupStatement({ now, hash }),
    );
    const row = rows[0];
    if (!row) {
      keyCache.delete(hash);
      return null;
    }
    entry = { principal: { ...row }, fetchedAt: t, seenWrittenAt: t };
    keyCache.set(hash, entry);
    return entry.principal;
  }
  // "Last seen" is written at most every 5 s per key, so busy stations do not write on every call.
  if (t - entry.seenWrittenAt > SEEN_WRITE_MS || t < entry.seenWrittenAt) {
    entry.seenWrittenAt = t;
    await pool.query(
      seenStatement({ now, stationId: entry.principal.stationId, keyId: entry.principal.keyId }),
    );
  }
  return entry.principal;
}

/** Whether `key` is a live (not revoked) key of the station. */
export async function isLiveStationKey(db: DbOrTx, stationId: string, key: string): Promise<boolean> {
  const [row] = await db
    .select({ id: stationKeys.id })
    .from(stationKeys)
    .where(
      and(
        eq(stationKeys.stationId, stationId),
        eq(stationKeys.keyHash, hashStationKey(key)),
        isNull(stationKeys.revokedAt),
      ),
    );
  return row !== undefined;
}

export async function recordHeartbeat(db: DbOrTx, stationId: string, now: Date): Promise<void> {
  await db.update(stations).set({ lastSeenAt: now }).where(eq(stations.id, stationId));
}

export async function findStation(db: DbOrTx, id: string): Promise<StationRecord | undefined> {
  const [row] = await db.select().from(stations).where(eq(stations.id, id));
  return row;
}

export async function listStationViews(db: DbOrTx): Promise<StationView[]> {
  const rows = await db.select().from(stations).orderBy(asc(stations.line), asc(stations.name));
  const keys = await db.select().from(stationKeys).orderBy(asc(stationKeys.createdAt));
  const modelRows = (await listModelRows(db)).map((m) => ({ id: m.id, code: m.code }));
  const userIds = rows.map((r) => r.attendedBy).filter((x): x is string => !!x);
  const people = [...(await displayNamesByIds(db, userIds))].map(([id, displayName]) => ({
    id,
    displayName,
  }));
  return rows.map((s) => ({
    id: s.id,
    name: s.name,
    line: s.line,
    allowedModels: modelRows.filter((m) => s.allowedModelIds.includes(m.id)),
    lastSeenAt: s.lastSeenAt?.toISOString() ?? null,
    attendedBy: people.find((p) => p.id === s.attendedBy) ?? null,
    keys: keys
      .filter((k) => k.stationId === s.id)
      .map((k) => ({
        id: k.id,
        label: k.label,
        prefix: k.prefix,
        createdAt: k.createdAt.toISOString(),
        lastUsedAt: k.lastUsedAt?.toISOString() ?? null,
        revokedAt: k.revokedAt?.toISOString() ?? null,
      })),
  }));
}

async function checkModels(db: DbOrTx, ids: string[]) {
  if (ids.length === 0) return;
  const found = await existingModelIds(db, ids);
  if (found.size !== new Set(ids).size) throw stationErrors.unknownModels();
}

function mapNameConflict(e: unknown, name: string): never {
  const err = e as { code?: string; cause?: { code?: string } };
  if ((err.code ?? err.cause?.code) === '23505') throw stationErrors.nameTaken(name);
  throw e;
}

export async function createStation(
  db: Db,
  actor: SessionUser | null,
  input: z.input<typeof createStationSchema>,
) {
  const v = createStationSchema.parse(input);
  await checkModels(db, v.allowedModelIds);
  return db
    .transaction(async (tx) => {
      const [row] = await tx.insert(stations).values(v).returning();
      await insertAudit(tx, {
        actorId: actor?.id,
        actorName: actor?.displayName,
        action: 'stations.created',
        subjectType: 'station',
        subjectId: row.id,
        after: row,
      });
      return row;
    })
    .catch((e: unknown) => mapNameConflict(e, v.name));
}

export async function updateStation(
  db: Db,
  actor: SessionUser,
  id: string,
  input: z.input<typeof updateStationSchema>,
) {
  const v = updateStationSchema.parse(input);
  if (v.allowedModelIds) await checkModels(db, v.allowedModelIds);
  return db
    .transaction(async (tx) => {
      const before = await findStation(tx, id);
      if (!before) throw stationErrors.notFound();
      const [after] = await tx.update(stations).set(v).where(eq(stations.id, id)).returning();
      await insertAudit(tx, {
        actorId: actor.id,
        actorName: actor.displayName,
        action: 'stations.updated',
        subjectType: 'station',
        subjectId: id,
        before,
        after,
      });
      return after;
    })
    .catch((e: unknown) => mapNameConflict(e, v.name ?? ''));
}

/** Creates a key and returns it in clear this once. */
export async function createStationKey(db: Db, actor: SessionUser | null, stationId: string, label: string) {
  const station = await findStation(db, stationId);
  if (!station) throw stationErrors.notFound();
  const key = STATION_KEY_PREFIX + randomBytes(32).toString('base64url');
  const prefix = key.slice(0, STATION_KEY_PREFIX.length + 6);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(stationKeys)
      .values({ stationId, label, prefix, keyHash: hashStationKey(key), createdBy: actor?.id ?? null })
      .returning();
    await insertAudit(tx, {
      actorId: actor?.id,
      actorName: actor?.displayName,
      action: 'stations.key_created',
      subjectType: 'station',
      subjectId: stationId,
      after: { keyId: row.id, label, prefix },
    });
    return { id: row.id, label, prefix, key };
  });
}

export async function revokeStationKey(
  db: Db,
  actor: SessionUser,
  stationId: string,
  keyId: string,
  now: Date,
) {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(stationKeys)
      .set({ revokedAt: sql`coalesce(${stationKeys.revokedAt}, ${now.toISOString()}::timestamptz)` })
      .where(and(eq(stationKeys.id, keyId), eq(stationKeys.stationId, stationId)))
      .returning();
    if (!row) throw stationErrors.keyNotFound();
    forgetCachedStationKeys();
    await insertAudit(tx, {
      actorId: actor.id,
      actorName: actor.displayName,
      action: 'stations.key_revoked',
      subjectType: 'station',
      subjectId: stationId,
      after: { keyId, prefix: row.prefix },
    });
  });
}

/** The operator at a station's panel takes it over; measurements from now on name them. */
export async function attendStation(db: Db, user: SessionUser, stationId: string, now: Date) {
  const station = await findStation(db, stationId);
  if (!station) throw stationErrors.notFound();
  await db
    .update(stations)
    .set({ attendedBy: user.id, attendedSince: now })
    .where(eq(stations.id, stationId));
  if (station.attendedBy !== user.id) {
    await insertAudit(db, {
      actorId: user.id,
      actorName: user.displayName,
      action: 'stations.attended',
      subjectType: 'station',
      subjectId: stationId,
      before: { attendedBy: station.attendedBy },
      after: { attendedBy: user.id },
    });
  }
}

/** Every station with the models it may test (id, name, allowed model ids), by name. */
export async function listStationsAllowingModels(db: DbOrTx) {
  return db
    .select({ id: stations.id, name: stations.name, allowedModelIds: stations.allowedModelIds })
    .from(stations)
    .orderBy(asc(stations.name));
}

/** Names of the given stations, by id (for logs that keep only an id). */
export async function stationNamesByIds(db: DbOrTx, ids: string[]): Promise<Map<string, string>> {
  if (ids.length === 0) return new Map();
  const rows = await db
    .select({ id: stations.id, name: stations.name })
    .from(stations)
    .where(inArray(stations.id, ids));
  return new Map(rows.map((r) => [r.id, r.name]));
}

/** A station by its name, compared without regard to case. */
export async function findStationByName(db: DbOrTx, name: string): Promise<StationRecord | undefined> {
  const [row] = await db
    .select()
    .from(stations)
    .where(sql`upper(${stations.name}) = ${name.toUpperCase()}`);
  return row;
}

/** Revokes a station's live keys with this label; the revoked keys' ids and prefixes. */
export async function revokeStationKeysLabelled(
  db: DbOrTx,
  stationId: string,
  label: string,
  now: Date,
): Promise<{ id: string; prefix: string }[]> {
  return db
    .update(stationKeys)
    .set({ revokedAt: now })
    .where(and(eq(stationKeys.stationId, stationId), eq(stationKeys.label, label), isNull(stationKeys.revokedAt)))
    .returning({ id: stationKeys.id, prefix: stationKeys.prefix });
}
