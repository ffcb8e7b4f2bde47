import { eq, sql } from 'drizzle-orm';
import type { DbOrTx } from '#server/db/client';
import { calibrations, programmingConfirmations } from '../calibrations/calibrations.table';
import { measurements } from '../measurements/measurements.table';
import { models, recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { travelers } from '../travelers/travelers.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';

/**
 * Everything a traveler prints about one calibration, in one statement: the calibration, the few
 * measurement columns it prints (never the stored bodies, which are most of a measurement row's bytes),
 * unit, model, recipe version, station, the operator's name, the newest programming confirmation, and
 * whether print 1 exists. Undefined when there is no such calibration.
 */
export async function travelerSource(db: DbOrTx, calibrationId: string) {
  const [row] = await db
    .select({
      cal: calibrations,
      m: { operatorId: measurements.operatorId, receivedAt: measurements.receivedAt },
      unit: units,
      model: models,
      recipe: recipes,
      station: stations,
      operatorName: users.displayName,
      conf: sql<{
        matches: boolean;
        writtenCounts: number;
        readBackCounts: number;
        checksum: string | null;
        confirmedAt: string;
      } | null>`(select json_build_object('matches', pc.matches, 'writtenCounts', pc.written_counts,
          'readBackCounts', pc.read_back_counts, 'checksum', pc.checksum, 'confirmedAt', pc.confirmed_at)
        from ${programmingConfirmations} pc where pc.calibration_id = ${calibrations.id}
        order by pc.confirmed_at desc limit 1)`,
      firstPrintId: sql<string | null>`(select t.id from ${travelers} t
        where t.calibration_id = ${calibrations.id} and t.print_number = 1 limit 1)`,
    })
    .from(calibrations)
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(models, eq(models.id, units.modelId))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .leftJoin(users, eq(users.id, measurements.operatorId))
    .where(eq(calibrations.id, calibrationId));
  if (!row) return undefined;
  const { operatorName, conf, ...rest } = row;
  return {
    ...rest,
    operator: operatorName ? { displayName: operatorName } : undefined,
    conf: conf
      ? { ...conf, confirmedAt: new Date(conf.confirmedAt), checksum: conf.checksum ?? '' }
      : undefined,
  };
}
export type TravelerSource = NonNullable<Awaited<ReturnType<typeof travelerSource>>>;
