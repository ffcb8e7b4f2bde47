import { Link, useSearchParams } from 'react-router';
import { Alert } from '#src/components/ui/alert';
import { LinkButton } from '#src/components/ui/button';
import { SetPasswordForm } from '#src/features/auth/components/set-password-form';
import { AuthLayout } from '../auth-layout';

export function Component() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';

  return (
    <AuthLayout
      title="Choose your password"
      lead="This link came in an invitation or a password reset e-mail."
    >
      <title>Choose a password · Phasewright</title>
      {token.length < 20 ? (
        <div className="flex flex-col gap-6">
          <Alert tone="fault" title="This link is incomplete">
            The address has no valid token. Open the link from the e-mail again, or copy the whole address.
          </Alert>
          <Link to="/forgot-password" className="inline-flex min-h-target items-center self-start">
            Ask for a new link
          </Link>
        </div>
      ) : (
        <SetPasswordForm
          token={token}
          askAgain={<Link to="/forgot-password">Ask for a new link.</Link>}
          done={(displayName) => (
            <div className="flex flex-col gap-6">
              <Alert tone="ok" title="Password saved">
                {displayName}, your password is set. Use it with your user name from now on.
              </Alert>
              <LinkButton to="/" variant="primary" size="lg">
                Continue
              </LinkButton>
            </div>
          )}
        />
      )}
    </AuthLayout>
  );
}
