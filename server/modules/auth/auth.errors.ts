import { AppError } from '../../lib/errors';

export const authErrors = {
  badCredentials: () => new AppError(401, 'auth.bad_credentials', 'User name or password is wrong.'),
  badBadge: () => new AppError(401, 'auth.bad_credentials', 'Badge or PIN is wrong.'),
  disabled: () =>
    new AppError(
      403,
      'auth.account_disabled',
      'This account is disabled. Ask an administrator to enable it.',
    ),
  locked: (until: Date) =>
    new AppError(
      423,
      'auth.account_locked',
      `Too many failed attempts: this account is locked until ${until.toISOString().slice(11, 16)} UTC. An administrator can unlock it sooner.`,
      { lockedUntil: until.toISOString() },
    ),
  rateLimited: (retryAfterS: number) =>
    new AppError(
      429,
      'auth.rate_limited',
      `Too many failed sign-ins from this device. Try again in ${Math.ceil(retryAfterS / 60)} min.`,
      { retryAfterS },
    ),
  tokenInvalid: () =>
    new AppError(400, 'auth.token_invalid', 'This link is not valid or was already used. Ask for a new one.'),
  tokenExpired: () => new AppError(400, 'auth.token_expired', 'This link has expired. Ask for a new one.'),
};
