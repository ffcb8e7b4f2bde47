/**
 * One error type for everything the API refuses on purpose. `code` is stable and dotted
 * (`<area>.<reason>`), `status` is the HTTP status, `message` is a sentence for a person.
 */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: Record<string, unknown>,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const errors = {
  validation: (message: string, issues: { path: string; message: string }[]) =>
    new AppError(400, 'request.invalid', message, { issues }),
  notFound: (what: string, code = 'resource.not_found') => new AppError(404, code, `${what} was not found.`),
  conflict: (code: string, message: string) => new AppError(409, code, message),
  authRequired: () => new AppError(401, 'auth.required', 'Sign in to continue.'),
  forbidden: () => new AppError(403, 'auth.forbidden', 'Your role does not allow this.'),
};
