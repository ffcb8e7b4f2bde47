import { z } from 'zod';
import { roleSchema } from './roles';

export const usernameSchema = z
  .string()
  .trim()
  .min(3, 'At least 3 characters')
  .max(40, 'At most 40 characters')
  .regex(/^[a-z0-9._-]+$/, 'Lower-case letters, digits, dot, dash and underscore only');

/** Passwords: at least 10 characters; no other composition rule (NIST SP 800-63B favours length). */
export const passwordSchema = z.string().min(10, 'At least 10 characters').max(200, 'At most 200 characters');

/** Badge codes are what the badge scanner types: letters, digits and dashes. */
export const badgeCodeSchema = z
  .string()
  .trim()
  .min(4, 'At least 4 characters')
  .max(32, 'At most 32 characters')
  .regex(/^[A-Za-z0-9-]+$/, 'Letters, digits and dashes only');

/**
 * The one spelling of a badge code: without surrounding white space (a scanner's CR/LF), upper-cased.
 * It is what is stored, looked up (`upper(badge_code) = <normalised>`) and named in the sign-in throttle.
 */
export function normaliseBadgeCode(raw: string): string {
  return raw.trim().toUpperCase();
}

export const pinSchema = z.string().regex(/^\d{4,8}$/, '4 to 8 digits');

export const passwordSignInSchema = z.object({
  username: z.string().trim().min(1, 'Enter your user name').max(40),
  password: z.string().min(1, 'Enter your password').max(200),
});
export type PasswordSignIn = z.infer<typeof passwordSignInSchema>;

export const badgeSignInSchema = z.object({
  badgeCode: z.string().trim().min(1, 'Scan or type your badge').max(32),
  pin: z.string().min(1, 'Enter your PIN').max(8),
});
export type BadgeSignIn = z.infer<typeof badgeSignInSchema>;

export const meSchema = z.object({
  id: z.string().uuid(),
  username: z.string(),
  displayName: z.string(),
  email: z.string().nullable(),
  role: roleSchema,
});
export type Me = z.infer<typeof meSchema>;

export const meResponseSchema = z.object({ user: meSchema });
export type MeResponse = z.infer<typeof meResponseSchema>;

/** Asking for a reset link: always answered 202, whether or not the address is known. */
export const passwordResetRequestSchema = z.object({
  email: z.string().trim().email('Enter an e-mail address'),
});
export const passwordResetAcceptedSchema = z.object({ accepted: z.literal(true) });

/** Completing an invitation or a reset: the single-use token from the e-mail and the new password. */
export const setPasswordSchema = z.object({
  token: z.string().min(20).max(200),
  password: passwordSchema,
});
export type SetPassword = z.infer<typeof setPasswordSchema>;

/** Shape of every error body the API returns. `issues` is present for validation errors. */
export const apiErrorSchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    issues: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
  }),
});
export type ApiError = z.infer<typeof apiErrorSchema>;
