import type pg from 'pg';
import { prepared } from '#server/db/prepared';
import type { CalibrationRecord } from '../calibrations/calibrations.table';
import type { UnitRecord } from '../units/units.table';

/** Everything a traveler prints about one calibration (see travelerSources). */
export interface TravelerSource {
  cal: {
    id: string;
    unitId: string;
    stationId: string;
    verdict: CalibrationRecord['verdict'];
    result: unknown;
    engineVersion: string;
    computedAt: Date;
  };
  m: { receivedAt: Date };
  unit: Pick<UnitRecord, 'serial' | 'hallBoardLot' | 'magnetRingLot' | 'statorLot' | 'status' | 'holdReason'>;
  model: { code: string; name: string; polePairs: number };
  recipe: { version: number; name: string | null; countsPerTurn: number };
  station: { name: string; line: string };
  operator?: { displayName: string };
  conf?: {
    matches: boolean;
    writtenCounts: number;
    readBackCounts: number;
    checksum: string;
    confirmedAt: Date;
  };
  /** Print 1 of this calibration, when it exists. */
  firstPrintId: string | null;
}

interface SourceRow {
  id: string;
  unit_id: string;
  station_id: string;
  verdict: CalibrationRecord['verdict'];
  result: unknown;
  engine_version: string;
  computed_at: Date;
  received_at: Date;
  serial: string;
  hall_board_lot: string | null;
  magnet_ring_lot: string | null;
  stator_lot: string | null;
  status: UnitRecord['status'];
  hold_reason: string | null;
  model_code: string;
  model_name: string;
  pole_pairs: number;
  recipe_version: number;
  recipe_name: string | null;
  counts_per_turn: number;
  station_name: string;
  station_line: string;
  operator_name: string | null;
  conf_matches: boolean | null;
  conf_written: number | null;
  conf_read_back: number | null;
  conf_checksum: string | null;
  conf_at: Date | null;
  first_print_id: string | null;
}

/**
 * One statement for any number of calibrations: the calibration, the few measurement columns a traveler
 * prints (never the stored bodies, most of a measurement row's bytes), unit, model, the two recipe fields
 * it prints (not the whole body), station, the operator's name, the newest programming confirmation, and
 * whether print 1 exists. Plain SQL, prepared once per connection: the renderer runs it for every batch.
 */
const SOURCES_SQL = `
  select c.id, c.unit_id, c.station_id, c.verdict, c.result, c.engine_version, c.computed_at,
         m.received_at,
         u.serial, u.hall_board_lot, u.magnet_ring_lot, u.stator_lot, u.status, u.hold_reason,
         mo.code as model_code, mo.name as model_name, mo.pole_pairs,
         r.version as recipe_version, r.body->>'name' as recipe_name,
         r.body->'countsPerTurn' as counts_per_turn,
         s.name as station_name, s.line as station_line,
         op.display_name as operator_name,
         pc.matches as conf_matches, pc.written_counts as conf_written, pc.read_back_counts as conf_read_back,
         pc.checksum as conf_checksum, pc.confirmed_at as conf_at,
         (select t.id from travelers t where t.calibration_id = c.id and t.print_number = 1 limit 1) as first_print_id
    from calibrations c
    join measurements m on m.id = c.measurement_pk
    join units u on u.id = c.unit_id
    join models mo on mo.id = u.model_id
    join recipes r on r.id = c.recipe_id
    join stations s on s.id = c.station_id
    left join users op on op.id = m.operator_id
    left join lateral (
      select matches, written_counts, read_back_counts, checksum, confirmed_at
        from programming_confirmations where calibration_id = c.id
       order by confirmed_at desc limit 1) pc on true
   where c.id = any($1::uuid[])`;

/** The traveler sources of the calibrations that exist, by calibration id (as given). */
export async function travelerSources(
  client: pg.Pool | pg.PoolClient,
  calibrationIds: readonly string[],
): Promise<Map<string, TravelerSource>> {
  const out = new Map<string, TravelerSource>();
  if (!calibrationIds.length) return out;
  const { rows } = await client.query<SourceRow>(prepared(SOURCES_SQL, [calibrationIds]));
  const byId = new Map(rows.map((r) => [r.id, r]));
  for (const id of calibrationIds) {
    // PostgreSQL answers with its own spelling of the uuid (lower case).
    const r = byId.get(id) ?? byId.get(id.toLowerCase());
    if (r) out.set(id, sourceOf(r));
  }
  return out;
}

function sourceOf(r: SourceRow): TravelerSource {
  return {
    cal: {
      id: r.id,
      unitId: r.unit_id,
      stationId: r.station_id,
      verdict: r.verdict,
      result: r.result,
      engineVersion: r.engine_version,
      computedAt: r.computed_at,
    },
    m: { receivedAt: r.received_at },
    unit: {
      serial: r.serial,
      hallBoardLot: r.hall_board_lot,
      magnetRingLot: r.magnet_ring_lot,
      statorLot: r.stator_lot,
      status: r.status,
      holdReason: r.hold_reason,
    },
    model: { code: r.model_code, name: r.model_name, polePairs: r.pole_pairs },
    recipe: { version: r.recipe_version, name: r.recipe_name, countsPerTurn: r.counts_per_turn },
    station: { name: r.station_name, line: r.station_line },
    operator: r.operator_name ? { displayName: r.operator_name } : undefined,
    conf:
      r.conf_matches === null
        ? undefined
        : {
            matches: r.conf_matches,
            writtenCounts: r.conf_written!,
            readBackCounts: r.conf_read_back!,
            checksum: r.conf_checksum ?? '',
            confirmedAt: r.conf_at!,
          },
    firstPrintId: r.first_print_id,
  };
}
