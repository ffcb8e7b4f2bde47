import { createHash } from 'node:crypto';

/**
 * A query as a named prepared statement: PostgreSQL parses and plans it once per connection instead
 * of on every call (on the hot station path planning cost more than running the statements). The name
 * is derived from the text, so the same text always maps to the same statement.
 */
export function prepared(text: string, values: unknown[]): { name: string; text: string; values: unknown[] } {
  return { name: `pw_${createHash('sha1').update(text).digest('hex').slice(0, 20)}`, text, values };
}
