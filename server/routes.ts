import type { AppDeps } from './deps';
import type { RouteDef } from './lib/http';
import { auditRoutes } from './modules/audit/audit.routes';
import { authRoutes } from './modules/auth/auth.routes';
import { healthRoutes } from './modules/health/health.routes';
import { mailRoutes } from './modules/mail/mail.routes';
import { usersRoutes } from './modules/users/users.routes';

/**
 * Every HTTP route the server has, in one list. Each declares who may call it; the app mounts
 * them in this order and the role × route test walks this same list.
 */
export function buildRoutes(deps: AppDeps): RouteDef[] {
  return [
    ...healthRoutes(deps),
    ...authRoutes(deps),
    ...usersRoutes(deps),
    ...mailRoutes(deps),
    ...auditRoutes(deps),
  ];
}
