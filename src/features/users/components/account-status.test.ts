import { describe, expect, it } from 'vitest';
import type { UserRow } from '#shared/schemas/users';
import { accountStatus } from './account-status';

const now = new Date('2026-12-02T12:00:00Z');
const base: UserRow = {
  id: '00000000-0000-4000-8000-000000000001',
  username: 'sam.sample',
  displayName: 'Sam Sample',
  email: null,
  role: 'operator',
  badgeCode: null,
  hasPin: false,
  hasPassword: true,
  disabled: false,
  lockedUntil: null,
  failedAttempts: 0,
  lastSignInAt: null,
  createdAt: '2026-12-01T00:00:00Z',
};

describe('the status shown for an account', () => {
  it('is locked only while the lock lasts', () => {
    expect(accountStatus({ ...base, lockedUntil: '2026-12-02T12:15:00Z' }, now)).toBe('locked');
    expect(accountStatus({ ...base, lockedUntil: '2026-12-02T11:45:00Z' }, now)).toBe('active');
  });
  it('shows switched off before locked, since unlocking would not let them in', () => {
    expect(accountStatus({ ...base, disabled: true, lockedUntil: '2026-12-02T12:15:00Z' }, now)).toBe(
      'disabled',
    );
  });
  it('counts a badge-and-PIN account as set up, and one with neither password nor PIN as invited', () => {
    expect(accountStatus({ ...base, hasPassword: false, hasPin: true, badgeCode: 'OP-1' }, now)).toBe(
      'active',
    );
    expect(accountStatus({ ...base, hasPassword: false }, now)).toBe('invited');
  });
});
