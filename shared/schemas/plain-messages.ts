import { z } from 'zod';

/**
 * Validation messages in plain words, for the server's 400 answers and the client's forms alike.
 * Installed once as zod's global error map (`z.config`) by whoever validates for people: the server
 * app and the client entry import this module. A schema's own message (e.g. "Choose a model") still
 * wins; this only replaces the library's default wording ("Too big: expected string to have <=60
 * characters" becomes "Too long: at most 60 characters (this has 240).").
 */

type Issue = z.core.$ZodRawIssue;

const count = (n: number | bigint, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

function typeWords(expected: string): string {
  switch (expected) {
    case 'string':
      return 'text';
    case 'number':
      return 'a number';
    case 'int':
      return 'a whole number';
    case 'boolean':
      return 'yes or no (true or false)';
    case 'array':
      return 'a list';
    case 'object':
      return 'a group of fields';
    case 'date':
      return 'a date';
    default:
      return `a ${expected}`;
  }
}

function formatWords(format: string): string {
  switch (format) {
    case 'uuid':
    case 'guid':
      return 'Not a valid id: expected an id as the application gives it (a UUID).';
    case 'email':
      return 'Not an e-mail address (like name@example.com).';
    case 'url':
      return 'Not a web address (like https://example.com).';
    case 'datetime':
      return 'Not a date and time: expected ISO 8601 with a zone, like 2026-12-02T14:00:00Z.';
    case 'date':
      return 'Not a date: expected YYYY-MM-DD.';
    case 'regex':
      return 'Holds characters that are not allowed here.';
    default:
      return `Not in the expected form (${format}).`;
  }
}

/** The plain sentence for one zod issue. */
export function plainMessage(issue: Issue): string {
  const input = issue.input;
  switch (issue.code) {
    case 'invalid_type': {
      if (input === undefined) return 'Required.';
      if (issue.expected === 'int') return 'Must be a whole number.';
      if (issue.expected === 'number' && typeof input === 'number') return 'Must be a finite number.';
      return `Must be ${typeWords(String(issue.expected))}.`;
    }
    case 'too_big': {
      const max = issue.maximum as number;
      if (issue.origin === 'string') {
        const has = typeof input === 'string' ? ` (this has ${input.length})` : '';
        return `Too long: at most ${count(max, 'character', 'characters')}${has}.`;
      }
      if (issue.origin === 'array' || issue.origin === 'set') return `Too many entries: at most ${max}.`;
      return issue.inclusive ? `Must be at most ${max}.` : `Must be less than ${max}.`;
    }
    case 'too_small': {
      const min = issue.minimum as number;
      if (issue.origin === 'string') {
        if (min <= 1) return 'Must not be empty.';
        const has = typeof input === 'string' ? ` (this has ${input.length})` : '';
        return `Too short: at least ${count(min, 'character', 'characters')}${has}.`;
      }
      if (issue.origin === 'array' || issue.origin === 'set')
        return min <= 1 ? 'Needs at least one entry.' : `Needs at least ${min} entries.`;
      return issue.inclusive ? `Must be at least ${min}.` : `Must be more than ${min}.`;
    }
    case 'invalid_value':
      return `Must be one of: ${(issue.values as unknown[]).map(String).join(', ')}.`;
    case 'invalid_format':
      return formatWords(String(issue.format));
    case 'not_multiple_of':
      return `Must be a multiple of ${String(issue.divisor)}.`;
    case 'unrecognized_keys':
      return `Holds fields that are not known here: ${(issue.keys as string[]).join(', ')}.`;
    case 'invalid_union':
      return 'Does not match any of the allowed forms.';
    case 'invalid_key':
    case 'invalid_element':
      return 'Holds an entry that is not valid.';
    default:
      return 'Not valid.';
  }
}

z.config({ customError: (issue) => plainMessage(issue) });

/** The first message per top-level field of a failed parse, for forms. */
export function messagesByField(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const field = String(issue.path[0] ?? '');
    out[field] ??= issue.message;
  }
  return out;
}
