import { useId, useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { Button } from '#src/components/ui/button';
import { readScan } from '#src/lib/read-scan';

/** Finds a unit by serial (typed or scanned) and opens its page. */
export function UnitSearch({ autoFocus = false, initial = '' }: { autoFocus?: boolean; initial?: string }) {
  const id = useId();
  const navigate = useNavigate();
  const [value, setValue] = useState(initial);
  const [error, setError] = useState<string | null>(null);
  const submit = (event: FormEvent) => {
    event.preventDefault();
    const scan = readScan(value);
    if ('error' in scan) {
      setError(scan.error);
      return;
    }
    setError(null);
    void navigate(`/units/${encodeURIComponent(scan.serial)}`);
  };
  return (
    <form role="search" onSubmit={submit} className="flex flex-col gap-1.5" aria-label="Find a unit">
      <label htmlFor={id} className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
        Unit serial
      </label>
      <div className="flex gap-2">
        <input
          id={id}
          autoFocus={autoFocus}
          value={value}
          onChange={(event) => setValue(event.target.value)}
          autoComplete="off"
          spellCheck={false}
          placeholder="Scan or type a serial"
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : undefined}
          className="min-h-target w-full border-2 border-graphite-600 bg-graphite-950 px-3 font-mono text-lg text-graphite-50 placeholder:font-sans placeholder:text-graphite-400 hover:border-graphite-400 focus-visible:border-copper-400"
        />
        <Button type="submit" variant="primary">
          Find
        </Button>
      </div>
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-sm font-medium text-fault">
          {error}
        </p>
      ) : null}
    </form>
  );
}
