import { prepared } from './prepared';

/**
 * A prepared statement whose parameters have names: the SQL says `$measurementPk`, the caller passes
 * `{ measurementPk }`, and a reader sees in one place what each value is. The names are turned into
 * PostgreSQL's `$1…$n` once, when the statement is defined; a name used twice is one parameter. A
 * value the statement names but the call lacks is a programming error and throws.
 */
export function namedStatement<V extends object>(
  text: string,
): (values: V) => { name: string; text: string; values: unknown[] } {
  const names: string[] = [];
  const positional = text.replace(/\$([A-Za-z_]\w*)/g, (_whole, name: string) => {
    let i = names.indexOf(name);
    if (i < 0) i = names.push(name) - 1;
    return `$${i + 1}`;
  });
  return (values) =>
    prepared(
      positional,
      names.map((n) => {
        if (!(n in values)) throw new Error(`statement parameter $${n} has no value`);
        return (values as Record<string, unknown>)[n];
      }),
    );
}
