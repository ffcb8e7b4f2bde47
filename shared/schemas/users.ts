import { z } from 'zod';
import { roleSchema } from './roles';
import { badgeCodeSchema, passwordSchema, pinSchema, usernameSchema } from './auth';

/** People's accounts as administrators manage them. */

export const userRowSchema = z.object({
  id: z.string().uuid(),
  username: z.string(),
  displayName: z.string(),
  email: z.string().nullable(),
  role: roleSchema,
  badgeCode: z.string().nullable(),
  hasPin: z.boolean(),
  hasPassword: z.boolean(),
  disabled: z.boolean(),
  lockedUntil: z.string().nullable(),
  failedAttempts: z.number().int(),
  lastSignInAt: z.string().nullable(),
  createdAt: z.string(),
});
export type UserRow = z.infer<typeof userRowSchema>;

export const userListResponseSchema = z.object({ users: z.array(userRowSchema) });

const optionalEmail = z
  .union([z.string().trim().email('Enter a valid e-mail address'), z.literal('')])
  .transform((v) => (v === '' ? null : v))
  .nullable();

/**
 * Creating an account. With `sendInvite` the person gets an e-mail link to choose a password
 * (needs an e-mail address); otherwise an initial password is set here. Operators who work at a
 * station get a badge code and PIN.
 */
export const createUserSchema = z
  .object({
    username: usernameSchema,
    displayName: z.string().trim().min(1, 'Enter a name').max(80),
    email: optionalEmail.optional().default(null),
    role: roleSchema,
    badgeCode: z.union([badgeCodeSchema, z.literal('')]).optional(),
    pin: z.union([pinSchema, z.literal('')]).optional(),
    sendInvite: z.boolean().default(false),
    password: z.union([passwordSchema, z.literal('')]).optional(),
  })
  .superRefine((v, ctx) => {
    if (v.sendInvite && !v.email) {
      ctx.addIssue({ code: 'custom', path: ['email'], message: 'An invitation needs an e-mail address' });
    }
    if (!v.sendInvite && !v.password && !v.badgeCode) {
      ctx.addIssue({
        code: 'custom',
        path: ['password'],
        message: 'Set a password, a badge and PIN, or send an invitation',
      });
    }
    if (v.badgeCode && !v.pin)
      ctx.addIssue({ code: 'custom', path: ['pin'], message: 'A badge needs a PIN' });
  });
export type CreateUser = z.input<typeof createUserSchema>;

/** Changing an account. Every field optional; `reason` is written to the audit log. */
export const updateUserSchema = z.object({
  displayName: z.string().trim().min(1).max(80).optional(),
  email: optionalEmail.optional(),
  role: roleSchema.optional(),
  disabled: z.boolean().optional(),
  badgeCode: z.union([badgeCodeSchema, z.literal('')]).optional(),
  pin: z.union([pinSchema, z.literal('')]).optional(),
  reason: z.string().trim().max(500).optional(),
});
export type UpdateUser = z.input<typeof updateUserSchema>;

export const userResponseSchema = z.object({ user: userRowSchema });
