import { useMemo, useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { badgeCodeSchema, pinSchema } from '#shared/schemas/auth';
import { ROLE_LABELS, ROLES, roleSchema } from '#shared/schemas/roles';
import type { UpdateUser, UserRow } from '#shared/schemas/users';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { CheckboxField, SelectField, TextAreaField, TextField } from '#src/components/ui/field';
import { StatusChip } from '#src/components/ui/status-chip';
import { applyServerErrors } from '#src/lib/form-errors';
import { useSendPasswordLink, useUnlockUser, useUpdateUser } from '../api/users';
import { accountStatus, isLocked, STATUS_LABELS, STATUS_TONES } from './account-status';

/**
 * The edit form holds every field as text; the request carries only what changed. Role changes and
 * switching access off or on are recorded in the audit log, so they need a reason.
 */
function editSchema(original: UserRow) {
  return z
    .object({
      displayName: z.string().trim().min(1, 'Enter a name').max(80, 'At most 80 characters'),
      email: z.union([z.string().trim().email('Enter a valid e-mail address'), z.literal('')]),
      role: roleSchema,
      disabled: z.boolean(),
      badgeCode: z.union([badgeCodeSchema, z.literal('')]),
      pin: z.union([pinSchema, z.literal('')]),
      reason: z.string().trim().max(500, 'At most 500 characters'),
    })
    .superRefine((v, ctx) => {
      const needsReason = v.role !== original.role || v.disabled !== original.disabled;
      if (needsReason && v.reason === '') {
        ctx.addIssue({
          code: 'custom',
          path: ['reason'],
          message: 'Say why: role changes and switching access on or off are recorded',
        });
      }
      const newBadge = v.badgeCode !== '' && v.badgeCode !== (original.badgeCode ?? '');
      if (newBadge && !original.hasPin && v.pin === '') {
        ctx.addIssue({ code: 'custom', path: ['pin'], message: 'A badge needs a PIN' });
      }
    });
}
type EditValues = z.output<ReturnType<typeof editSchema>>;

const FIELDS = ['displayName', 'email', 'role', 'disabled', 'badgeCode', 'pin', 'reason'] as const;

function changes(original: UserRow, v: EditValues): UpdateUser {
  const patch: UpdateUser = {};
  if (v.displayName !== original.displayName) patch.displayName = v.displayName;
  if (v.email !== (original.email ?? '')) patch.email = v.email;
  if (v.role !== original.role) patch.role = v.role;
  if (v.disabled !== original.disabled) patch.disabled = v.disabled;
  if (v.badgeCode !== (original.badgeCode ?? '')) patch.badgeCode = v.badgeCode;
  if (v.pin !== '') patch.pin = v.pin;
  return patch;
}

type EditUserDialogProps = {
  user: UserRow | null;
  currentUserId: string;
  onClose: () => void;
  onSaved: (message: string) => void;
};

export function EditUserDialog({ user, currentUserId, onClose, onSaved }: EditUserDialogProps) {
  return (
    <Dialog
      open={user !== null}
      onClose={onClose}
      title={user ? `Change ${user.displayName}` : 'Change account'}
      wide
    >
      {user ? (
        <EditUserForm
          key={user.id}
          user={user}
          isSelf={user.id === currentUserId}
          onCancel={onClose}
          onSaved={onSaved}
        />
      ) : null}
    </Dialog>
  );
}

function EditUserForm({
  user,
  isSelf,
  onCancel,
  onSaved,
}: {
  user: UserRow;
  isSelf: boolean;
  onCancel: () => void;
  onSaved: (message: string) => void;
}) {
  const update = useUpdateUser();
  const schema = useMemo(() => editSchema(user), [user]);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<z.input<typeof schema>, unknown, EditValues>({
    resolver: zodResolver(schema),
    defaultValues: {
      displayName: user.displayName,
      email: user.email ?? '',
      role: user.role,
      disabled: user.disabled,
      badgeCode: user.badgeCode ?? '',
      pin: '',
      reason: '',
    },
  });
  const { errors } = form.formState;
  const [role, disabled] = useWatch({ control: form.control, name: ['role', 'disabled'] });
  const reasonNeeded = role !== user.role || disabled !== user.disabled;

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    const patch = changes(user, values);
    if (Object.keys(patch).length === 0) {
      setBanner('Nothing has changed yet.');
      return;
    }
    if (values.reason !== '') patch.reason = values.reason;
    try {
      await update.mutateAsync({ id: user.id, patch });
      onSaved(`${values.displayName}: changes saved.`);
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, FIELDS));
    }
  });

  const status = accountStatus(user);
  return (
    <div className="flex flex-col gap-6">
      <p className="flex flex-wrap items-center gap-3 text-graphite-300">
        <span className="font-mono">{user.username}</span>
        <StatusChip tone={STATUS_TONES[status]}>{STATUS_LABELS[status]}</StatusChip>
        {isSelf ? <span className="text-copper-200">This is your own account.</span> : null}
      </p>
      <AccessActions user={user} />
      <form
        onSubmit={submit}
        noValidate
        className="flex flex-col gap-5"
        aria-label={`Change ${user.displayName}`}
      >
        {banner ? (
          <Alert tone="fault" title="Not saved">
            {banner}
          </Alert>
        ) : null}
        <div className="grid gap-5 sm:grid-cols-2">
          <TextField
            label="Full name"
            required
            error={errors.displayName?.message}
            {...form.register('displayName')}
          />
          <TextField
            label="E-mail"
            type="email"
            autoComplete="off"
            error={errors.email?.message}
            {...form.register('email')}
          />
          <SelectField
            label="Role"
            options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))}
            disabled={isSelf}
            hint={isSelf ? 'Another administrator must change your own role.' : undefined}
            error={errors.role?.message}
            {...form.register('role')}
          />
          <div className="flex items-end">
            <CheckboxField
              label="Switch this account off"
              disabled={isSelf}
              hint={
                isSelf
                  ? 'You cannot switch off your own account.'
                  : 'Signs them out and refuses every sign-in.'
              }
              {...form.register('disabled')}
            />
          </div>
          <TextField
            label="Badge code"
            autoComplete="off"
            spellCheck={false}
            className="font-mono"
            hint="Empty removes the badge."
            error={errors.badgeCode?.message}
            {...form.register('badgeCode')}
            onKeyDown={(event) => {
              if (event.key === 'Enter') {
                event.preventDefault();
                form.setFocus('pin');
              }
            }}
          />
          <TextField
            label="New PIN"
            type="password"
            inputMode="numeric"
            autoComplete="new-password"
            hint={user.hasPin ? 'Leave empty to keep the current PIN.' : '4 to 8 digits.'}
            error={errors.pin?.message}
            {...form.register('pin')}
          />
        </div>
        <TextAreaField
          label="Reason for the change"
          required={reasonNeeded}
          hint={
            reasonNeeded
              ? 'Required: kept in the audit log with the change.'
              : 'Optional; kept in the audit log.'
          }
          error={errors.reason?.message}
          {...form.register('reason')}
        />
        <div className="flex flex-wrap justify-end gap-3 pt-2">
          <Button onClick={onCancel}>Cancel</Button>
          <Button
            type="submit"
            variant={disabled && !user.disabled ? 'danger' : 'primary'}
            busy={update.isPending}
          >
            {disabled && !user.disabled ? 'Switch off and save' : 'Save changes'}
          </Button>
        </div>
      </form>
    </div>
  );
}

/** Actions that take effect at once, outside the form: a password link and unlocking. */
function AccessActions({ user }: { user: UserRow }) {
  const sendLink = useSendPasswordLink();
  const unlock = useUnlockUser();
  const locked = isLocked(user);
  return (
    <section
      aria-labelledby={`access-${user.id}`}
      className="flex flex-col gap-3 border border-graphite-700 bg-graphite-900 p-4"
    >
      <h3
        id={`access-${user.id}`}
        className="text-sm font-semibold tracking-wide text-graphite-200 uppercase"
      >
        Password and lock
      </h3>
      <div className="flex flex-wrap items-center gap-3">
        <Button
          onClick={() => sendLink.mutate(user.id)}
          busy={sendLink.isPending}
          disabled={!user.email || user.disabled}
        >
          E-mail a password link
        </Button>
        {locked ? (
          <Button onClick={() => unlock.mutate(user.id)} busy={unlock.isPending}>
            Unlock now
          </Button>
        ) : null}
        {!user.email ? (
          <span className="text-graphite-400">Add an e-mail address to send a link.</span>
        ) : null}
        {user.disabled && user.email ? (
          <span className="text-graphite-400">Switch the account on first.</span>
        ) : null}
      </div>
      {sendLink.isSuccess ? (
        <Alert tone="ok" title="Link sent">
          A single-use link went to {user.email}. It shows in the Outbox.
        </Alert>
      ) : null}
      {sendLink.isError ? (
        <Alert tone="fault" title="Link not sent">
          {sendLink.error.message}
        </Alert>
      ) : null}
      {unlock.isSuccess ? (
        <Alert tone="ok" title="Unlocked">
          They can sign in again; the failed-attempt count is cleared.
        </Alert>
      ) : null}
      {unlock.isError ? (
        <Alert tone="fault" title="Not unlocked">
          {unlock.error.message}
        </Alert>
      ) : null}
    </section>
  );
}
