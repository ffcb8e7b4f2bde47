import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { isApiError } from './api-client';

/**
 * Puts the server's validation issues onto the matching form fields. Returns the message to show above
 * the form: the server's own message, or null when every issue found its field.
 */
export function applyServerErrors<T extends FieldValues>(
  error: unknown,
  setError: UseFormSetError<T>,
  fields: readonly string[],
): string | null {
  if (!isApiError(error)) return 'Something went wrong. Try again.';
  let unplaced = error.issues.length === 0;
  for (const issue of error.issues) {
    const field = issue.path.split('.')[0];
    if (fields.includes(field)) setError(field as Path<T>, { type: 'server', message: issue.message });
    else unplaced = true;
  }
  return unplaced ? error.message : null;
}
