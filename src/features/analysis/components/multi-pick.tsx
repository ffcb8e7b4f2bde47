import { useId } from 'react';
import { CheckboxField } from '#src/components/ui/field';

/** What the closed picker says: every choice, or the names chosen (a count beyond three). */
export function pickSummary(chosen: string[], choices: { value: string; label: string }[]): string {
  const names = choices.filter((c) => chosen.includes(c.value)).map((c) => c.label);
  if (names.length === 0) return 'All';
  if (names.length <= 3) return names.join(', ');
  return `${names.length} chosen`;
}

/**
 * Several values of one filter at once (stations, lots, operators, recipe versions): a disclosure that opens on
 * a list of checkboxes. Nothing ticked means no restriction. The caller keeps the choice in the URL.
 */
export function MultiPick({
  label,
  chosen,
  choices,
  disabled,
  onChange,
}: {
  label: string;
  chosen: string[];
  choices: { value: string; label: string }[] | undefined;
  disabled?: boolean;
  onChange: (next: string[]) => void;
}) {
  const id = useId();
  const list = choices ?? [];
  return (
    <div className="flex flex-col gap-1.5">
      <span id={`${id}-label`} className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
        {label}
      </span>
      <details className="group relative">
        <summary
          aria-labelledby={`${id}-label ${id}-value`}
          aria-disabled={disabled || undefined}
          className={
            'flex min-h-target cursor-pointer list-none items-center justify-between gap-2 border-2 border-graphite-600 ' +
            'bg-graphite-950 px-3 py-2 text-lg text-graphite-50 hover:border-graphite-400 ' +
            'focus-visible:border-copper-400 ' +
            (disabled ? 'pointer-events-none opacity-60' : '')
          }
        >
          <span id={`${id}-value`} className="truncate" title={pickSummary(chosen, list)}>
            {pickSummary(chosen, list)}
          </span>
          <span aria-hidden className="text-graphite-300 group-open:rotate-180">
            ▾
          </span>
        </summary>
        <fieldset className="absolute z-20 mt-1 flex max-h-80 w-full min-w-56 flex-col overflow-y-auto border-2 border-graphite-500 bg-graphite-900 px-3 py-2 shadow-lg">
          <legend className="sr-only">{label}</legend>
          {list.length === 0 ? <p className="py-2 text-graphite-300">Nothing to choose yet.</p> : null}
          {list.map((c) => (
            <CheckboxField
              key={c.value}
              label={c.label}
              checked={chosen.includes(c.value)}
              onChange={(e) =>
                onChange(e.target.checked ? [...chosen, c.value] : chosen.filter((v) => v !== c.value))
              }
            />
          ))}
          {chosen.length > 0 ? (
            <button
              type="button"
              className="mt-1 min-h-target self-start px-1 text-left text-copper-300 underline"
              onClick={() => onChange([])}
            >
              Clear: show all
            </button>
          ) : null}
        </fieldset>
      </details>
    </div>
  );
}
