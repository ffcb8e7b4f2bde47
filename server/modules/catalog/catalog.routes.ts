import { asc, inArray } from 'drizzle-orm';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import type { ModelView } from '../../../shared/schemas/line';
import { models, recipes } from './catalog.table';

export function catalogRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/models',
      access: 'signed-in',
      summary: 'Motor models with their active recipe version',
      handler: async (_req, res) => {
        const rows = await deps.db.select().from(models).orderBy(asc(models.code));
        const ids = rows.map((m) => m.activeRecipeId).filter((x): x is string => !!x);
        const active = ids.length ? await deps.db.select().from(recipes).where(inArray(recipes.id, ids)) : [];
        const out: ModelView[] = rows.map((m) => {
          const r = active.find((a) => a.id === m.activeRecipeId);
          return {
            id: m.id,
            code: m.code,
            name: m.name,
            polePairs: m.polePairs,
            activeRecipe: r
              ? { id: r.id, version: r.version, name: r.body.name ?? null, body: r.body }
              : null,
          };
        });
        res.json({ models: out });
      },
    }),
  ];
}
