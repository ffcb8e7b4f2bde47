import {
  useId,
  type InputHTMLAttributes,
  type ReactNode,
  type Ref,
  type SelectHTMLAttributes,
  type TextareaHTMLAttributes,
} from 'react';

const controlBase =
  'w-full min-h-target border-2 border-graphite-600 bg-graphite-950 px-3 py-2 text-lg text-graphite-50 ' +
  'placeholder:text-graphite-400 hover:border-graphite-400 focus-visible:border-copper-400 ' +
  'aria-invalid:border-fault disabled:opacity-60';

type FieldShellProps = {
  id: string;
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  required?: boolean;
  children: ReactNode;
};

function FieldShell({ id, label, hint, error, required, children }: FieldShellProps) {
  return (
    <div className="flex flex-col gap-1.5">
      <div className="flex items-baseline gap-1">
        <label htmlFor={id} className="text-sm font-semibold tracking-wide text-graphite-200 uppercase">
          {label}
        </label>
        {/* The control carries aria-required; the mark is for the eye and stays out of the label's name. */}
        {required ? (
          <span className="text-sm text-copper-300" aria-hidden>
            *
          </span>
        ) : null}
      </div>
      {children}
      {hint && !error ? (
        <p id={`${id}-hint`} className="text-sm text-graphite-400">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p
          id={`${id}-error`}
          className="flex items-start gap-1.5 text-sm font-medium text-fault"
          role="alert"
        >
          <span aria-hidden className="mt-1 inline-block size-2.5 shrink-0 rotate-45 bg-fault" />
          {error}
        </p>
      ) : null}
    </div>
  );
}

function describedBy(id: string, hint: unknown, error: unknown): string | undefined {
  if (error) return `${id}-error`;
  if (hint) return `${id}-hint`;
  return undefined;
}

type TextFieldProps = Omit<InputHTMLAttributes<HTMLInputElement>, 'id'> & {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  ref?: Ref<HTMLInputElement>;
};

export function TextField({ label, hint, error, required, className = '', ref, ...rest }: TextFieldProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} hint={hint} error={error} required={required}>
      <input
        id={id}
        ref={ref}
        className={`${controlBase} ${className}`}
        aria-invalid={error ? true : undefined}
        aria-required={required || undefined}
        aria-describedby={describedBy(id, hint, error)}
        {...rest}
      />
    </FieldShell>
  );
}

type TextAreaFieldProps = Omit<TextareaHTMLAttributes<HTMLTextAreaElement>, 'id'> & {
  label: string;
  hint?: ReactNode;
  error?: string;
  ref?: Ref<HTMLTextAreaElement>;
};

export function TextAreaField({
  label,
  hint,
  error,
  required,
  className = '',
  ref,
  ...rest
}: TextAreaFieldProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} hint={hint} error={error} required={required}>
      <textarea
        id={id}
        ref={ref}
        rows={3}
        className={`${controlBase} ${className}`}
        aria-invalid={error ? true : undefined}
        aria-required={required || undefined}
        aria-describedby={describedBy(id, hint, error)}
        {...rest}
      />
    </FieldShell>
  );
}

type SelectFieldProps = Omit<SelectHTMLAttributes<HTMLSelectElement>, 'id'> & {
  label: string;
  hint?: ReactNode;
  error?: string;
  options: readonly { value: string; label: string }[];
  ref?: Ref<HTMLSelectElement>;
};

export function SelectField({
  label,
  hint,
  error,
  required,
  options,
  className = '',
  ref,
  ...rest
}: SelectFieldProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} hint={hint} error={error} required={required}>
      <select
        id={id}
        ref={ref}
        className={`${controlBase} ${className}`}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(id, hint, error)}
        {...rest}
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </FieldShell>
  );
}

type CheckboxFieldProps = Omit<InputHTMLAttributes<HTMLInputElement>, 'id' | 'type'> & {
  label: ReactNode;
  hint?: ReactNode;
  ref?: Ref<HTMLInputElement>;
};

/** A checkbox with the whole row as its target (44 px high at least). */
export function CheckboxField({ label, hint, ref, ...rest }: CheckboxFieldProps) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="flex min-h-target cursor-pointer items-center gap-3 text-lg">
        <input
          id={id}
          ref={ref}
          type="checkbox"
          className="size-6 shrink-0 cursor-pointer accent-copper-400"
          aria-describedby={hint ? `${id}-hint` : undefined}
          {...rest}
        />
        {label}
      </label>
      {hint ? (
        <p id={`${id}-hint`} className="pl-9 text-sm text-graphite-400">
          {hint}
        </p>
      ) : null}
    </div>
  );
}
