import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { passwordResetRequestSchema } from '#shared/schemas/auth';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useRequestPasswordReset } from '../api/password';

type ResetRequest = z.input<typeof passwordResetRequestSchema>;

export function ForgotPasswordForm() {
  const request = useRequestPasswordReset();
  const [sentTo, setSentTo] = useState<string | null>(null);
  const [banner, setBanner] = useState<string | null>(null);
  const form = useForm<ResetRequest>({
    resolver: zodResolver(passwordResetRequestSchema),
    defaultValues: { email: '' },
  });

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      await request.mutateAsync({ email: values.email.trim() });
      setSentTo(values.email.trim());
    } catch (error) {
      setBanner(applyServerErrors(error, form.setError, ['email']));
    }
  });

  if (sentTo) {
    return (
      <Alert tone="ok" title="Check your e-mail">
        If <strong className="text-graphite-50">{sentTo}</strong> belongs to a Phasewright account, a link to
        choose a new password is on its way. The link works once and expires. Nothing arrived? Ask an
        administrator.
      </Alert>
    );
  }

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Ask for a password link">
      {banner ? <Alert tone="fault">{banner}</Alert> : null}
      <TextField
        label="E-mail address"
        type="email"
        autoComplete="email"
        autoFocus
        required
        error={form.formState.errors.email?.message}
        {...form.register('email')}
      />
      <Button type="submit" variant="primary" size="lg" busy={request.isPending}>
        Send the link
      </Button>
    </form>
  );
}
