import { useState, type ReactNode } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { passwordSchema } from '#shared/schemas/auth';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { isApiError } from '#src/lib/api-client';
import { applyServerErrors } from '#src/lib/form-errors';
import { useSetPassword } from '../api/password';

// Confirmation is a client-side courtesy; the contract carries only the password.
const choosePasswordSchema = z
  .object({ password: passwordSchema, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ' });
type ChoosePassword = z.infer<typeof choosePasswordSchema>;

const tokenMessages: Record<string, { title: string; body: string }> = {
  'auth.token_invalid': {
    title: 'This link no longer works',
    body: 'It has been used already or was replaced by a newer one. Ask for a new link.',
  },
  'auth.token_expired': {
    title: 'This link has expired',
    body: 'Links are valid for a limited time. Ask for a new link.',
  },
};

type SetPasswordFormProps = {
  token: string;
  done: (displayName: string) => ReactNode;
  askAgain: ReactNode;
};

export function SetPasswordForm({ token, done, askAgain }: SetPasswordFormProps) {
  const setPassword = useSetPassword();
  const [banner, setBanner] = useState<{ title: string; body: string } | null>(null);
  const [finishedFor, setFinishedFor] = useState<string | null>(null);
  const form = useForm<ChoosePassword>({
    resolver: zodResolver(choosePasswordSchema),
    defaultValues: { password: '', confirm: '' },
  });
  const { errors } = form.formState;

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      const { user } = await setPassword.mutateAsync({ token, password: values.password });
      setFinishedFor(user.displayName);
    } catch (error) {
      if (isApiError(error) && tokenMessages[error.code]) {
        setBanner(tokenMessages[error.code]);
        return;
      }
      const message = applyServerErrors(error, form.setError, ['password']);
      if (message) setBanner({ title: 'Password not set', body: message });
    }
  });

  if (finishedFor !== null) return <>{done(finishedFor)}</>;

  const tokenDead = banner !== null && Object.values(tokenMessages).includes(banner);
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Choose a password">
      {banner ? (
        <Alert tone="fault" title={banner.title}>
          {banner.body} {tokenDead ? askAgain : null}
        </Alert>
      ) : null}
      <TextField
        label="New password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters. A short sentence is easy to remember and hard to guess."
        autoFocus
        required
        error={errors.password?.message}
        {...form.register('password')}
      />
      <TextField
        label="Repeat the password"
        type="password"
        autoComplete="new-password"
        required
        error={errors.confirm?.message}
        {...form.register('confirm')}
      />
      <Button type="submit" variant="primary" size="lg" busy={setPassword.isPending}>
        Save the password
      </Button>
    </form>
  );
}
