import { createHash } from 'node:crypto';

/**
 * Statement names by text: the name is a hash of the text, worked out once per distinct text rather than on
 * every call (the hot statements are several kilobytes long and run a few times a unit). The product's
 * named statements are a fixed set written in its source (a few vary with a batch's size), and the map is
 * bounded besides.
 */
const names = new Map<string, string>();

/**
 * A query as a named prepared statement: PostgreSQL parses and plans it once per connection instead
 * of on every call (on the hot station path planning cost more than running the statements). The name
 * is derived from the text, so the same text always maps to the same statement.
 */
export function prepared(text: string, values: unknown[]): { name: string; text: string; values: unknown[] } {
  let name = names.get(text);
  if (!name) {
    name = `pw_${createHash('sha1').update(text).digest('hex').slice(0, 20)}`;
    // Texts are a fixed set in the code (a few vary with a batch's size): the map stays small.
    if (names.size < 10_000) names.set(text, name);
  }
  return { name, text, values };
}
