import { AppError } from '#server/lib/errors';

export const jobErrors = {
  notFailed: () =>
    new AppError(404, 'jobs.not_failed', 'No failed job with this id (it may have been replayed already).'),
};
