import { useRef, useState, type ReactNode } from 'react';
import { Link } from 'react-router';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  badgeSignInSchema,
  passwordSignInSchema,
  type BadgeSignIn,
  type Me,
  type PasswordSignIn,
} from '#shared/schemas/auth';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextField } from '#src/components/ui/field';
import { applyServerErrors } from '#src/lib/form-errors';
import { useBadgeSignIn, usePasswordSignIn } from '../api/sign-in';
import { signInErrorMessage, type SignInMode } from './sign-in-messages';

type SignInFormProps = {
  mode: SignInMode;
  onModeChange: (mode: SignInMode) => void;
  onSignedIn: (user: Me) => void;
  forgotPasswordHref: string;
};

export function SignInForm({ mode, onModeChange, onSignedIn, forgotPasswordHref }: SignInFormProps) {
  return (
    <div className="flex flex-col gap-6">
      <div role="group" aria-label="How to sign in" className="grid grid-cols-2 gap-2">
        <ModeButton active={mode === 'password'} onClick={() => onModeChange('password')}>
          User name and password
        </ModeButton>
        <ModeButton active={mode === 'badge'} onClick={() => onModeChange('badge')}>
          Badge and PIN
        </ModeButton>
      </div>
      {mode === 'password' ? (
        <PasswordForm
          onSignedIn={onSignedIn}
          forgot={
            <Link
              to={forgotPasswordHref}
              className="inline-flex min-h-target items-center self-start text-base"
            >
              Forgot your password?
            </Link>
          }
        />
      ) : (
        <BadgeForm onSignedIn={onSignedIn} />
      )}
    </div>
  );
}

function ModeButton({
  active,
  onClick,
  children,
}: {
  active: boolean;
  onClick: () => void;
  children: string;
}) {
  return (
    <button
      type="button"
      aria-pressed={active}
      onClick={onClick}
      className={`min-h-target border-b-4 px-3 py-2 text-base font-semibold tracking-wide ${
        active
          ? 'border-copper-400 bg-graphite-800 text-graphite-50'
          : 'border-graphite-700 bg-transparent text-graphite-400 hover:border-graphite-500 hover:text-graphite-100'
      }`}
    >
      {children}
    </button>
  );
}

function PasswordForm({ onSignedIn, forgot }: { onSignedIn: (user: Me) => void; forgot: ReactNode }) {
  const signIn = usePasswordSignIn();
  const [banner, setBanner] = useState<{ title: string; body: string } | null>(null);
  const form = useForm<PasswordSignIn>({
    resolver: zodResolver(passwordSignInSchema),
    defaultValues: { username: '', password: '' },
  });
  const { errors } = form.formState;

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      const { user } = await signIn.mutateAsync(values);
      onSignedIn(user);
    } catch (error) {
      const message = applyServerErrors(error, form.setError, ['username', 'password']);
      if (message !== null) setBanner(signInErrorMessage(error, 'password'));
      form.setValue('password', '');
      form.setFocus('password');
    }
  });

  return (
    <form
      onSubmit={submit}
      noValidate
      className="flex flex-col gap-5"
      aria-label="Sign in with user name and password"
    >
      {banner ? (
        <Alert tone="fault" title={banner.title}>
          {banner.body}
        </Alert>
      ) : null}
      <TextField
        label="User name"
        autoComplete="username"
        autoCapitalize="none"
        spellCheck={false}
        autoFocus
        required
        error={errors.username?.message}
        {...form.register('username')}
      />
      <TextField
        label="Password"
        type="password"
        autoComplete="current-password"
        required
        error={errors.password?.message}
        {...form.register('password')}
      />
      <Button type="submit" variant="primary" size="lg" busy={signIn.isPending}>
        Sign in
      </Button>
      {forgot}
    </form>
  );
}

function BadgeForm({ onSignedIn }: { onSignedIn: (user: Me) => void }) {
  const signIn = useBadgeSignIn();
  const [banner, setBanner] = useState<{ title: string; body: string } | null>(null);
  const form = useForm<BadgeSignIn>({
    resolver: zodResolver(badgeSignInSchema),
    defaultValues: { badgeCode: '', pin: '' },
  });
  const { errors } = form.formState;
  const pinRef = useRef<HTMLInputElement | null>(null);
  const badge = form.register('badgeCode');
  const pin = form.register('pin');

  const submit = form.handleSubmit(async (values) => {
    setBanner(null);
    try {
      const { user } = await signIn.mutateAsync(values);
      onSignedIn(user);
    } catch (error) {
      const message = applyServerErrors(error, form.setError, ['badgeCode', 'pin']);
      if (message !== null) setBanner(signInErrorMessage(error, 'badge'));
      // A refused badge starts over from the scan, the way a person at the station expects.
      form.reset({ badgeCode: '', pin: '' }, { keepErrors: true });
      form.setFocus('badgeCode');
    }
  });

  return (
    <form
      onSubmit={submit}
      noValidate
      className="flex flex-col gap-5"
      aria-label="Sign in with badge and PIN"
    >
      {banner ? (
        <Alert tone="fault" title={banner.title}>
          {banner.body}
        </Alert>
      ) : null}
      <TextField
        label="Badge"
        hint="Scan your badge, or type its code and press Enter."
        autoComplete="off"
        autoCapitalize="characters"
        spellCheck={false}
        autoFocus
        required
        className="font-mono tracking-wider"
        error={errors.badgeCode?.message}
        {...badge}
        onKeyDown={(event) => {
          // The scanner types the code and presses Enter: that Enter moves on to the PIN, it does not submit.
          if (event.key === 'Enter') {
            event.preventDefault();
            if (event.currentTarget.value.trim() !== '') pinRef.current?.focus();
          }
        }}
      />
      <TextField
        label="PIN"
        type="password"
        inputMode="numeric"
        autoComplete="off"
        pattern="[0-9]*"
        required
        className="tracking-[0.4em]"
        error={errors.pin?.message}
        {...pin}
        ref={(element) => {
          pin.ref(element);
          pinRef.current = element;
        }}
      />
      <Button type="submit" variant="primary" size="lg" busy={signIn.isPending}>
        Sign in
      </Button>
    </form>
  );
}
