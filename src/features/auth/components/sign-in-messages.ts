import { isApiError } from '#src/lib/api-client';

export type SignInMode = 'password' | 'badge';

/** What the person reads after a refused sign-in: plain words, and what to do next. */
export function signInErrorMessage(error: unknown, mode: SignInMode): { title: string; body: string } {
  if (!isApiError(error)) return { title: 'Sign-in failed', body: 'Something went wrong. Try again.' };
  switch (error.code) {
    case 'auth.bad_credentials':
      return mode === 'badge'
        ? {
            title: 'Badge or PIN not recognised',
            body: 'Scan the badge again and re-enter the PIN. After 5 failed attempts the account stays locked for 15 minutes.',
          }
        : {
            title: 'User name or password not recognised',
            body: 'Check both and try again. Passwords are case-sensitive. After 5 failed attempts the account stays locked for 15 minutes, except on a browser it was used from before; an administrator can unlock it sooner.',
          };
    case 'auth.account_disabled':
      return { title: 'This account is switched off', body: 'Ask an administrator to switch it back on.' };
    case 'auth.account_locked':
      return { title: 'Account locked after repeated failed attempts', body: error.message };
    case 'auth.rate_limited':
      return {
        title: 'Too many attempts from this terminal',
        body: `${error.message} Wait before trying again.`,
      };
    case 'network.unreachable':
      return { title: 'Server not reachable', body: error.message };
    default:
      return { title: 'Sign-in refused', body: error.message };
  }
}
