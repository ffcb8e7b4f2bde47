import { redirect, useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router';
import { Alert } from '#src/components/ui/alert';
import { meQueryOptions } from '#src/features/auth/api/me';
import { SignInForm } from '#src/features/auth/components/sign-in-form';
import type { SignInMode } from '#src/features/auth/components/sign-in-messages';
import { queryClient } from '#src/lib/query-client';
import { AuthLayout } from '../auth-layout';
import { safeNextPath } from '../safe-next';

export async function loader({ request }: LoaderFunctionArgs) {
  // Someone already signed in has nothing to do here.
  const me = await queryClient.fetchQuery(meQueryOptions());
  if (me) return redirect(safeNextPath(new URL(request.url).searchParams.get('next')));
  return null;
}

export function Component() {
  const navigate = useNavigate();
  const [params, setParams] = useSearchParams();
  const mode: SignInMode = params.get('mode') === 'badge' ? 'badge' : 'password';
  const expired = params.get('expired') === '1';
  const next = safeNextPath(params.get('next'));

  return (
    <AuthLayout
      title="Sign in"
      lead={
        mode === 'badge'
          ? 'At a station: scan your badge, then enter your PIN.'
          : 'Use the account your administrator gave you.'
      }
    >
      <title>Sign in · Phasewright</title>
      {expired ? (
        <div className="mb-6">
          <Alert tone="info" title="Your session has ended">
            Sessions end after a shift or when an administrator changes the account. Sign in again to carry
            on.
          </Alert>
        </div>
      ) : null}
      <SignInForm
        mode={mode}
        onModeChange={(nextMode) =>
          setParams(
            (current) => {
              const updated = new URLSearchParams(current);
              if (nextMode === 'badge') updated.set('mode', 'badge');
              else updated.delete('mode');
              updated.delete('expired');
              return updated;
            },
            { replace: true },
          )
        }
        onSignedIn={() => navigate(next, { replace: true })}
        forgotPasswordHref="/forgot-password"
      />
    </AuthLayout>
  );
}
