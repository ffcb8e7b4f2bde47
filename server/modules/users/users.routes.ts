import type { Request } from 'express';
import type { SessionUser } from '#server/lib/auth';
import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute } from '#server/lib/http';
import {
  createUserSchema,
  updateUserSchema,
  userListResponseSchema,
  userResponseSchema,
} from '#shared/schemas/users';
import {
  createAccount,
  listAccounts,
  sendResetLink,
  unlockAccount,
  updateAccount,
  type UsersContext,
} from './users.service';

const idParams = z.object({ id: z.string().uuid('Not an account id') });

export function usersRoutes(deps: AppDeps) {
  const ctx = (actor: SessionUser, req: Request): UsersContext => ({
    db: deps.db,
    mailer: deps.mailer,
    clock: deps.clock,
    bcryptCost: deps.env.BCRYPT_COST,
    publicUrl: deps.env.PUBLIC_URL,
    actor,
    ip: req.ip ?? '',
  });
  return [
    defineRoute({
      method: 'get',
      path: '/api/admin/users',
      access: ['admin'],
      summary: 'List every account',
      responses: { 200: { description: 'Every account', schema: userListResponseSchema } },
      handle: async (_input, res) => {
        res.json({ users: await listAccounts(deps.db) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/users',
      access: ['admin'],
      summary: 'Create an account (optionally e-mailing an invitation)',
      responses: { 201: { description: 'The account', schema: userResponseSchema } },
      request: { body: createUserSchema },
      handle: async ({ body, caller }, res, req) => {
        const input = body;
        res.status(201).json({ user: await createAccount(ctx(caller.user, req), input) });
      },
    }),
    defineRoute({
      method: 'patch',
      path: '/api/admin/users/:id',
      access: ['admin'],
      summary: 'Change an account: name, e-mail, role, badge, PIN, disabled',
      responses: { 200: { description: 'The account', schema: userResponseSchema } },
      request: { params: idParams, body: updateUserSchema },
      handle: async ({ params, body, caller }, res, req) => {
        const { id } = params;
        const input = body;
        res.json({ user: await updateAccount(ctx(caller.user, req), id, input) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/users/:id/password-reset',
      access: ['admin'],
      summary: 'E-mail a password-reset link to the account',
      request: { params: idParams },
      handle: async ({ params, caller }, res, req) => {
        const { id } = params;
        await sendResetLink(ctx(caller.user, req), id);
        res.status(202).json({ sent: true });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/admin/users/:id/unlock',
      access: ['admin'],
      summary: 'Clear a lockout after failed sign-ins',
      responses: { 200: { description: 'The account', schema: userResponseSchema } },
      request: { params: idParams },
      handle: async ({ params, caller }, res, req) => {
        const { id } = params;
        res.json({ user: await unlockAccount(ctx(caller.user, req), id) });
      },
    }),
  ];
}
