import { AppError } from '#server/lib/errors';

export const mailErrors = {
  outboxUnavailable: () =>
    new AppError(
      409,
      'mail.outbox_unavailable',
      'Mail goes to a real relay (SMTP_URL); there is no local outbox to show.',
    ),
  outboxUnreachable: () =>
    new AppError(503, 'mail.outbox_unreachable', 'The local mail server is not answering.'),
};
