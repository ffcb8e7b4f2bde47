import { AppError } from '#server/lib/errors';

export const userErrors = {
  notFound: () => new AppError(404, 'users.not_found', 'No such account.'),
  usernameTaken: (u: string) =>
    new AppError(409, 'users.username_taken', `The user name "${u}" is already taken.`),
  emailTaken: () =>
    new AppError(409, 'users.email_taken', 'Another account already uses this e-mail address.'),
  badgeTaken: () => new AppError(409, 'users.badge_taken', 'Another account already uses this badge code.'),
  reasonRequired: () =>
    new AppError(400, 'users.reason_required', 'Give a reason when changing a role or disabling an account.'),
  lastAdmin: () =>
    new AppError(
      409,
      'users.last_admin',
      'This is the last active administrator; make someone else admin first.',
    ),
  noEmail: () => new AppError(409, 'users.no_email', 'This account has no e-mail address to send a link to.'),
};
