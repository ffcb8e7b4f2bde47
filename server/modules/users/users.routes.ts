import type { Request } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
import { createUserSchema, updateUserSchema } from '../../../shared/schemas/users';
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
  const ctx = (req: Request): UsersContext => ({
    db: deps.db,
    mailer: deps.mailer,
    clock: deps.clock,
    bcryptCost: deps.env.BCRYPT_COST,
    publicUrl: deps.env.PUBLIC_URL,
    actor: req.user!,
    ip: req.ip ?? '',
  });
  return [
    route({
      method: 'get',
      path: '/api/admin/users',
      access: ['admin'],
      summary: 'List every account',
      handler: async (_req, res) => {
        res.json({ users: await listAccounts(deps.db) });
      },
    }),
    route({
      method: 'post',
      path: '/api/admin/users',
      access: ['admin'],
      summary: 'Create an account (optionally e-mailing an invitation)',
      handler: async (req, res) => {
        const input = createUserSchema.parse(req.body);
        res.status(201).json({ user: await createAccount(ctx(req), input) });
      },
    }),
    route({
      method: 'patch',
      path: '/api/admin/users/:id',
      access: ['admin'],
      summary: 'Change an account: name, e-mail, role, badge, PIN, disabled',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        const input = updateUserSchema.parse(req.body);
        res.json({ user: await updateAccount(ctx(req), id, input) });
      },
    }),
    route({
      method: 'post',
      path: '/api/admin/users/:id/password-reset',
      access: ['admin'],
      summary: 'E-mail a password-reset link to the account',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        await sendResetLink(ctx(req), id);
        res.status(202).json({ sent: true });
      },
    }),
    route({
      method: 'post',
      path: '/api/admin/users/:id/unlock',
      access: ['admin'],
      summary: 'Clear a lockout after failed sign-ins',
      handler: async (req, res) => {
        const { id } = idParams.parse(req.params);
        res.json({ user: await unlockAccount(ctx(req), id) });
      },
    }),
  ];
}
