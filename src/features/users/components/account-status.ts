import type { UserRow } from '#shared/schemas/users';
import type { Tone } from '#src/components/ui/status-chip';

export type AccountStatus = 'active' | 'disabled' | 'locked' | 'invited';

export const STATUS_LABELS: Record<AccountStatus, string> = {
  active: 'Active',
  disabled: 'Switched off',
  locked: 'Locked',
  invited: 'Invited',
};

export const STATUS_TONES: Record<AccountStatus, Tone> = {
  active: 'ok',
  disabled: 'neutral',
  locked: 'fault',
  invited: 'accent',
};

export function isLocked(user: UserRow, now: Date = new Date()): boolean {
  return user.lockedUntil !== null && new Date(user.lockedUntil).getTime() > now.getTime();
}

/**
 * One status per account, most pressing first: switched off beats locked (unlocking a switched-off
 * account lets nobody in), locked beats invited. "Invited" means no way to sign in has been set yet.
 */
export function accountStatus(user: UserRow, now: Date = new Date()): AccountStatus {
  if (user.disabled) return 'disabled';
  if (isLocked(user, now)) return 'locked';
  if (!user.hasPassword && !user.hasPin) return 'invited';
  return 'active';
}
