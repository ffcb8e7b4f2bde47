import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { isApiError } from './api-client';

/** Refusals that concern one field although the server sends no issue list (conflicts, rules). */
const CODE_FIELDS: Record<string, string> = {
  'users.username_taken': 'username',
  'users.email_taken': 'email',
  'users.badge_taken': 'badgeCode',
  'users.reason_required': 'reason',
};

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
  const codeField = CODE_FIELDS[error.code];
  if (error.issues.length === 0 && codeField && fields.includes(codeField)) {
    setError(codeField as Path<T>, { type: 'server', message: error.message });
    return null;
  }
  let unplaced = error.issues.length === 0;
  for (const issue of error.issues) {
    const field = issue.path.split('.')[0];
    if (fields.includes(field)) setError(field as Path<T>, { type: 'server', message: issue.message });
    else unplaced = true;
  }
  return unplaced ? error.message : null;
}

/**
 * For a form of one text field (a reason, a comment): every refusal, whether it names the field or not (a
 * conflict, a rule), is shown under that field.
 */
export function showServerErrorOn<T extends FieldValues>(
  error: unknown,
  setError: UseFormSetError<T>,
  field: Path<T>,
): void {
  const message = applyServerErrors(error, setError, [field]);
  if (message) setError(field, { type: 'server', message });
}
