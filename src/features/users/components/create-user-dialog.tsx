import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { ROLE_LABELS, ROLES } from '#shared/schemas/roles';
import { createUserSchema, type UserRow } from '#shared/schemas/users';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { CheckboxField, SelectField, TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useCreateUser } from '../api/users';

type CreateUserInput = z.input<typeof createUserSchema>;
type CreateUserOutput = z.output<typeof createUserSchema>;

const FIELDS = [
  'username',
  'displayName',
  'email',
  'role',
  'badgeCode',
  'pin',
  'sendInvite',
  'password',
] as const;

const EMPTY: CreateUserInput = {
  username: '',
  displayName: '',
  email: '',
  role: 'operator',
  badgeCode: '',
  pin: '',
  sendInvite: true,
  password: '',
};

type CreateUserDialogProps = {
  open: boolean;
  onClose: () => void;
  onCreated: (user: UserRow, invited: boolean) => void;
};

export function CreateUserDialog({ open, onClose, onCreated }: CreateUserDialogProps) {
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title="Add a person"
      description="They sign in with a password (set now or chosen from an e-mailed invitation), with a badge and PIN at a station, or both."
      wide
    >
      {open ? <CreateUserForm onCancel={onClose} onCreated={onCreated} /> : null}
    </Dialog>
  );
}

function CreateUserForm({
  onCancel,
  onCreated,
}: {
  onCancel: () => void;
  onCreated: CreateUserDialogProps['onCreated'];
}) {
  const create = useCreateUser();
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<CreateUserInput, unknown, CreateUserOutput>({
    resolver: zodResolver(createUserSchema),
    defaultValues: EMPTY,
  });
  const { errors } = form.formState;
  const [sendInvite, role] = useWatch({ control: form.control, name: ['sendInvite', 'role'] });

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    const body = {
      ...values,
      // An invitation replaces the initial password; never send both.
      password: values.sendInvite ? '' : values.password,
    };
    try {
      const user = await create.mutateAsync(body);
      onCreated(user, values.sendInvite);
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, FIELDS));
    }
  });

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="New account">
      {banner ? (
        <Alert tone="fault" title="Account not created">
          {banner}
        </Alert>
      ) : null}
      <div className="grid gap-5 sm:grid-cols-2">
        <TextField
          label="Full name"
          required
          autoFocus
          error={errors.displayName?.message}
          {...form.register('displayName')}
        />
        <TextField
          label="User name"
          required
          autoCapitalize="none"
          spellCheck={false}
          hint="Lower-case letters, digits, dot, dash, underscore."
          error={errors.username?.message}
          {...form.register('username')}
        />
        <SelectField
          label="Role"
          required
          options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))}
          error={errors.role?.message}
          {...form.register('role')}
        />
        <TextField
          label="E-mail"
          type="email"
          autoComplete="off"
          hint={sendInvite ? 'The invitation goes here.' : 'Optional; needed for password links.'}
          required={sendInvite}
          error={errors.email?.message}
          {...form.register('email')}
        />
      </div>
      <fieldset className="flex flex-col gap-3 border border-graphite-700 p-4">
        <legend className="px-2 text-sm font-semibold tracking-wide text-graphite-200 uppercase">
          Password
        </legend>
        <CheckboxField
          label="E-mail an invitation to choose a password"
          hint="The link works once and expires."
          {...form.register('sendInvite')}
        />
        {!sendInvite ? (
          <TextField
            label="Initial password"
            type="password"
            autoComplete="new-password"
            hint="At least 10 characters. Leave empty for badge-only station accounts."
            error={errors.password?.message}
            {...form.register('password')}
          />
        ) : null}
      </fieldset>
      <fieldset className="flex flex-col gap-3 border border-graphite-700 p-4">
        <legend className="px-2 text-sm font-semibold tracking-wide text-graphite-200 uppercase">
          Station sign-in
        </legend>
        <p className="text-graphite-400">
          {role === 'operator'
            ? 'Operators usually sign in at the station with a badge and PIN.'
            : 'Optional for this role.'}
        </p>
        <div className="grid gap-5 sm:grid-cols-2">
          <TextField
            label="Badge code"
            autoComplete="off"
            spellCheck={false}
            className="font-mono"
            hint="Scan the badge into this field, or type it."
            error={errors.badgeCode?.message}
            {...form.register('badgeCode')}
            onKeyDown={(event) => {
              // A badge scanner ends with Enter; that must not submit a half-filled form.
              if (event.key === 'Enter') {
                event.preventDefault();
                form.setFocus('pin');
              }
            }}
          />
          <TextField
            label="PIN"
            type="password"
            inputMode="numeric"
            autoComplete="new-password"
            hint="4 to 8 digits."
            error={errors.pin?.message}
            {...form.register('pin')}
          />
        </div>
      </fieldset>
      <div className="flex flex-wrap justify-end gap-3 pt-2">
        <Button onClick={onCancel}>Cancel</Button>
        <Button type="submit" variant="primary" busy={create.isPending}>
          {sendInvite ? 'Create and send invitation' : 'Create account'}
        </Button>
      </div>
    </form>
  );
}
