import { useCallback, useEffect, useId, useRef, useState, type RefObject } from 'react';
import { readScan } from '#src/lib/read-scan';

/** Typed characters wait this long for more (or Enter) before they count as stray and are cleared, ms. */
export const STRAY_CLEAR_MS = 4000;

/** True for controls that take typed text themselves; the scan field leaves them alone. */
function isTextEntry(el: Element | null): boolean {
  if (!el) return false;
  if (el instanceof HTMLTextAreaElement || el instanceof HTMLSelectElement) return true;
  if (el instanceof HTMLInputElement)
    return !['button', 'submit', 'checkbox', 'radio', 'reset', 'range'].includes(el.type);
  return el instanceof HTMLElement && el.isContentEditable;
}

function dialogOpen(): boolean {
  return document.querySelector('dialog[open]') !== null;
}

type ScanFieldProps = {
  inputRef: RefObject<HTMLInputElement | null>;
  onScan: (serial: string) => void;
  /** A refused scan: the screen shows it as large as a verdict (and clears the unit on screen). */
  onRefused?: (message: string) => void;
  busy?: boolean;
};

/**
 * The scan field keeps the focus: a keyboard-wedge scanner types the serial and presses Enter, and
 * must land here whatever the operator touched last. Focus comes back after any click or blur (unless
 * a dialog is open); a character typed while a button has the focus is moved here too. Characters that
 * sit without an Enter for a few seconds were stray key presses and are cleared.
 */
export function ScanField({ inputRef, onScan, onRefused, busy = false }: ScanFieldProps) {
  const id = useId();
  const [value, setValue] = useState('');
  const [message, setMessage] = useState<{ tone: 'fault' | 'info'; text: string } | null>(null);
  const strayTimer = useRef<number | undefined>(undefined);

  const armStrayTimer = useCallback((text: string) => {
    window.clearTimeout(strayTimer.current);
    if (!text) return;
    strayTimer.current = window.setTimeout(() => {
      setValue('');
      setMessage({
        tone: 'info',
        text: `Cleared “${text}”: no Enter followed. Scan again, or type the serial and press Enter.`,
      });
    }, STRAY_CLEAR_MS);
  }, []);

  useEffect(() => () => window.clearTimeout(strayTimer.current), []);

  useEffect(() => {
    const refocus = () => {
      window.setTimeout(() => {
        const input = inputRef.current;
        if (!input || dialogOpen()) return;
        // Another text field (a search box, a dialog's form) keeps its focus; anything else gives it back.
        // Tabbing through buttons fires no click, so keyboard users keep their place until they act.
        if (isTextEntry(document.activeElement) && document.activeElement !== input) return;
        input.focus({ preventScroll: true });
      }, 0);
    };
    const onClick = () => refocus();
    const onFocusOut = (event: FocusEvent) => {
      if (event.target === inputRef.current && event.relatedTarget === null) refocus();
    };
    const onKeyDown = (event: KeyboardEvent) => {
      const input = inputRef.current;
      if (!input || dialogOpen() || event.defaultPrevented) return;
      if (event.target === input || isTextEntry(event.target as Element)) return;
      if (event.key.length !== 1 || event.ctrlKey || event.metaKey || event.altKey) return;
      // A printable key while a button has the focus: it is the start of a scan, not a button command.
      event.preventDefault();
      input.focus({ preventScroll: true });
      setValue((v) => {
        const next = v + event.key;
        armStrayTimer(next);
        return next;
      });
      setMessage(null);
    };
    document.addEventListener('click', onClick);
    document.addEventListener('focusout', onFocusOut);
    document.addEventListener('keydown', onKeyDown, true);
    return () => {
      document.removeEventListener('click', onClick);
      document.removeEventListener('focusout', onFocusOut);
      document.removeEventListener('keydown', onKeyDown, true);
    };
  }, [inputRef, armStrayTimer]);

  const submit = () => {
    window.clearTimeout(strayTimer.current);
    const scan = readScan(value);
    setValue('');
    if ('error' in scan) {
      if (onRefused) {
        setMessage(null);
        onRefused(scan.error);
      } else {
        setMessage({ tone: 'fault', text: scan.error });
      }
      return;
    }
    setMessage(null);
    onScan(scan.serial);
  };

  return (
    <div className="flex flex-col gap-2">
      <label htmlFor={id} className="flex items-center gap-3 text-lg font-semibold text-graphite-50">
        <svg width="30" height="22" viewBox="0 0 30 22" aria-hidden className="shrink-0 text-copper-300">
          {[1, 4, 6, 10, 12, 15, 19, 21, 25, 28].map((x, i) => (
            <rect key={x} x={x} y="1" width={i % 3 === 0 ? 2 : 1.2} height="20" fill="currentColor" />
          ))}
        </svg>
        Scan the unit&apos;s serial
        <span className="text-base font-normal text-graphite-300">(or type it, then Enter)</span>
      </label>
      <input
        id={id}
        ref={inputRef}
        autoFocus
        autoComplete="off"
        autoCapitalize="characters"
        spellCheck={false}
        enterKeyHint="go"
        value={value}
        aria-describedby={message ? `${id}-msg` : undefined}
        aria-invalid={message?.tone === 'fault' ? true : undefined}
        aria-busy={busy || undefined}
        data-testid="scan-input"
        placeholder="Waiting for a scan…"
        onChange={(event) => {
          setValue(event.target.value);
          armStrayTimer(event.target.value);
          setMessage(null);
        }}
        onKeyDown={(event) => {
          if (event.key === 'Enter') {
            event.preventDefault();
            submit();
          } else if (event.key === 'Escape') {
            setValue('');
            setMessage(null);
          }
        }}
        className="min-h-16 w-full border-2 border-copper-500 bg-graphite-950 px-4 font-mono text-3xl tracking-wider text-graphite-50 placeholder:font-sans placeholder:text-xl placeholder:tracking-normal placeholder:text-graphite-400 focus-visible:border-copper-300"
      />
      <p id={`${id}-msg`} role={message?.tone === 'fault' ? 'alert' : 'status'} className="min-h-6 text-base">
        {message ? (
          <span
            className={`flex items-start gap-2 ${message.tone === 'fault' ? 'text-fault' : 'text-graphite-300'}`}
          >
            <span
              aria-hidden
              className={`mt-1.5 inline-block size-2.5 shrink-0 ${message.tone === 'fault' ? 'rotate-45 bg-fault' : 'rounded-full bg-graphite-400'}`}
            />
            {message.text}
          </span>
        ) : null}
      </p>
    </div>
  );
}
