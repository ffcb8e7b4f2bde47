import type { AppDeps } from './deps';
import { defineRoute, type RouteDef } from './lib/http';
import { buildOpenApi } from './lib/openapi';
import { alertsRoutes } from './modules/alerts/alerts.routes';
import { analysisRoutes } from './modules/analysis/analysis.routes';
import { auditRoutes } from './modules/audit/audit.routes';
import { authRoutes } from './modules/auth/auth.routes';
import { APP_VERSION, healthRoutes } from './modules/health/health.routes';
import { jobsRoutes } from './modules/jobs/jobs.routes';
import { mailRoutes } from './modules/mail/mail.routes';
import { recipesRoutes } from './modules/recipes/recipes.routes';
import { measurementsRoutes } from './modules/measurements/measurements.routes';
import { stationsRoutes } from './modules/stations/stations.routes';
import { unitsRoutes } from './modules/units/units.routes';
import { qualityRoutes } from './modules/quality/quality.routes';
import { attachmentsRoutes } from './modules/quality/attachments.routes';
import { unitRecordRoutes } from './modules/quality/unit-record.routes';
import { travelersRoutes } from './modules/travelers/travelers.routes';
import { usersRoutes } from './modules/users/users.routes';
import { qualificationRoutes } from './modules/qualification/qualification.routes';

/**
 * Every HTTP route the server has, in one list. Each declares who may call it; the app mounts
 * them in this order, the role × route test walks this same list, and the OpenAPI document at
 * /api/openapi.json is generated from it.
 */
export function buildRoutes(deps: AppDeps): RouteDef[] {
  const routes: RouteDef[] = [
    ...healthRoutes(deps),
    ...authRoutes(deps),
    ...usersRoutes(deps),
    ...mailRoutes(deps),
    ...auditRoutes(deps),
    ...recipesRoutes(deps),
    ...unitsRoutes(deps),
    ...stationsRoutes(deps),
    ...measurementsRoutes(deps),
    ...travelersRoutes(deps),
    ...jobsRoutes(deps),
    ...analysisRoutes(deps),
    ...alertsRoutes(deps),
    ...qualityRoutes(deps),
    ...attachmentsRoutes(deps),
    ...unitRecordRoutes(deps),
    ...qualificationRoutes(deps),
  ];
  routes.push(
    defineRoute({
      method: 'get',
      path: '/api/openapi.json',
      access: 'anyone',
      summary: 'This API as an OpenAPI 3.1 document',
      responses: { 200: { description: 'The OpenAPI 3.1 document', contentType: 'application/json' } },
      handle: (_input, res) => {
        res.json(buildOpenApi(routes, APP_VERSION));
      },
    }),
  );
  return routes;
}
