import { Link } from 'react-router';
import { ForgotPasswordForm } from '#src/features/auth/components/forgot-password-form';
import { AuthLayout } from '../auth-layout';

export function Component() {
  return (
    <AuthLayout
      title="Forgot your password?"
      lead="Enter the e-mail address on your account and we will send a link to choose a new password. Badge users: ask an administrator for a new PIN."
    >
      <title>Forgot password · Phasewright</title>
      <div className="flex flex-col gap-6">
        <ForgotPasswordForm />
        <Link to="/sign-in" className="inline-flex min-h-target items-center self-start">
          Back to sign-in
        </Link>
      </div>
    </AuthLayout>
  );
}
