import { Outlet, useRouteLoaderData } from 'react-router';
import { roleAllows, type Access } from '#shared/schemas/roles';
import type { Me } from '#shared/schemas/auth';
import { NotAllowed } from './routes/not-allowed';

/** Renders the child route only for roles that `access` admits; everyone else sees why not. */
export function RequireAccess({ access }: { access: Access }) {
  const me = useRouteLoaderData('shell') as Me | undefined;
  if (!me || !roleAllows(access, me.role)) return <NotAllowed />;
  return <Outlet />;
}
