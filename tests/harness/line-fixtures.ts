import type { Db } from '#server/db/client';
import { models, recipes } from '#server/modules/recipes/recipes.table';
import { createStation, createStationKey } from '#server/modules/stations/stations.service';
import { eq } from 'drizzle-orm';
import type { Recipe } from '#shared/schemas/recipe';

/**
 * A recipe for tests: a 120° hall layout (rise angles 0/120/240 chosen for the test, not taken from a
 * product), generous limits. Tests that judge limits build their own.
 */
export function testRecipe(polePairs: number, overrides: Partial<Recipe> = {}): Recipe {
  return {
    name: `test ${polePairs}pp`,
    polePairs,
    hallRiseDeg: { A: 0, B: 120, C: 240 },
    bemfDelayUs: 0,
    debounceUs: 2,
    countsPerTurn: 65536,
    countsSigned: true,
    maxAttempts: 3,
    limits: { offsetDeg: [-15, 15], edgeResidualDeg: 4, speedRpm: [100, 20000], minElectricalRevs: 5 },
    ...overrides,
  };
}

/** A model with a released recipe, a station for it and a station key. */
export async function createLineFixture(
  db: Db,
  opts: { code?: string; polePairs?: number; recipe?: Partial<Recipe>; stationName?: string } = {},
) {
  const polePairs = opts.polePairs ?? 4;
  const [model] = await db
    .insert(models)
    .values({ code: opts.code ?? 'TM-40', name: 'Test motor', polePairs })
    .returning();
  const [recipe] = await db
    .insert(recipes)
    .values({
      modelId: model.id,
      version: 1,
      status: 'released',
      body: testRecipe(polePairs, opts.recipe),
      releasedAt: new Date(),
    })
    .returning();
  await db.update(models).set({ activeRecipeId: recipe.id }).where(eq(models.id, model.id));
  const station = await createStation(db, null, {
    name: opts.stationName ?? `EOL-${model.code}`,
    line: 'Line 1',
    allowedModelIds: [model.id],
  });
  const key = await createStationKey(db, null, station.id, 'test key');
  return { model, recipe, station, key: key.key };
}
