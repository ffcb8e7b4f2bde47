import { desc, eq } from 'drizzle-orm';
import type { DbOrTx } from '../../db/client';
import { calibrations, programmingConfirmations } from '../calibrations/calibrations.table';
import { measurements } from '../measurements/measurements.table';
import { models, recipes } from '../recipes/recipes.table';
import { stations } from '../stations/stations.table';
import { units } from '../units/units.table';
import { users } from '../users/users.table';

/**
 * Everything a traveler prints about one calibration: the calibration with its measurement, unit,
 * model, recipe version and station (one statement), the operator and the newest programming
 * confirmation. Undefined when there is no such calibration.
 */
export async function travelerSource(db: DbOrTx, calibrationId: string) {
  const [row] = await db
    .select({
      cal: calibrations,
      m: measurements,
      unit: units,
      model: models,
      recipe: recipes,
      station: stations,
    })
    .from(calibrations)
    .innerJoin(measurements, eq(measurements.id, calibrations.measurementPk))
    .innerJoin(units, eq(units.id, calibrations.unitId))
    .innerJoin(models, eq(models.id, units.modelId))
    .innerJoin(recipes, eq(recipes.id, calibrations.recipeId))
    .innerJoin(stations, eq(stations.id, calibrations.stationId))
    .where(eq(calibrations.id, calibrationId));
  if (!row) return undefined;
  const [operator] = row.m.operatorId
    ? await db.select().from(users).where(eq(users.id, row.m.operatorId))
    : [];
  const [conf] = await db
    .select()
    .from(programmingConfirmations)
    .where(eq(programmingConfirmations.calibrationId, calibrationId))
    .orderBy(desc(programmingConfirmations.confirmedAt))
    .limit(1);
  return { ...row, operator, conf };
}
