import { AppError } from '#server/lib/errors';

/** Minutes an account stays locked (kept here so the refusal can say it; see auth.service.ts). */
export const LOCKOUT_MINUTES = 15;

export const authErrors = {
  // One answer for an unknown name, a wrong secret and a locked account, so a refusal reveals nothing.
  badCredentials: () =>
    new AppError(
      401,
      'auth.bad_credentials',
      `User name or password is wrong, or the account is locked for ${LOCKOUT_MINUTES} minutes after repeated failed attempts.`,
    ),
  badBadge: () =>
    new AppError(
      401,
      'auth.bad_credentials',
      `Badge or PIN is wrong, or the account is locked for ${LOCKOUT_MINUTES} minutes after repeated failed attempts.`,
    ),
  disabled: () =>
    new AppError(
      403,
      'auth.account_disabled',
      'This account is disabled. Ask an administrator to enable it.',
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
