import { z } from 'zod';

/**
 * The four roles. Admin can do everything; the others see their own areas.
 * Order matters only for display.
 */
export const ROLES = ['operator', 'engineer', 'quality', 'admin'] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const ROLE_LABELS: Record<Role, string> = {
  operator: 'Line operator',
  engineer: 'Process engineer',
  quality: 'Quality',
  admin: 'Administrator',
};

/**
 * Who may call a route: a list of roles (admin always included), `{ only: roles }` (exactly these
 * roles, admin not implied: for work that belongs to one trade, such as changing recipes), or
 * 'anyone' (signed in or not), or 'signed-in' (any role).
 */
export type Access = 'anyone' | 'signed-in' | readonly Role[] | { readonly only: readonly Role[] };

/** True when a user of `role` satisfies `access` (admin satisfies every role list). */
export function roleAllows(access: Access, role: Role | null): boolean {
  if (access === 'anyone') return true;
  if (role === null) return false;
  if (access === 'signed-in') return true;
  if ('only' in access) return access.only.includes(role);
  return role === 'admin' || access.includes(role);
}
