import { useEffect, useRef } from 'react';

/** A handler per `KeyboardEvent.key` ("F8", "1"); it returns false when the key was not for it. */
export type Hotkeys = Record<string, (event: KeyboardEvent) => void | false>;

/** Whether a modal dialog is open on the page (its own keys win then). */
export function dialogOpen(): boolean {
  return document.querySelector('dialog[open]') !== null;
}

/**
 * The one way a screen takes keyboard shortcuts: a listener on the document (so keys work while the
 * focus is in a field, as the station's scan field always has it), the latest handlers without
 * re-subscribing, and `preventDefault` for every key a handler took. By default shortcuts pause while a
 * modal dialog is open; a dialog's own keys pass `inDialog: true`.
 *
 * Our own 30 lines rather than a hotkeys package: the screens need plain single keys (function keys and
 * digits) in form fields and a pause under dialogs, which a package would need three options to do.
 */
export function useHotkeys(keys: Hotkeys, { enabled = true, inDialog = false } = {}): void {
  const current = useRef(keys);
  useEffect(() => {
    current.current = keys;
  });
  useEffect(() => {
    if (!enabled) return;
    const onKey = (event: KeyboardEvent) => {
      if (!inDialog && dialogOpen()) return;
      const handler = current.current[event.key];
      if (!handler) return;
      if (handler(event) !== false) event.preventDefault();
    };
    document.addEventListener('keydown', onKey);
    return () => document.removeEventListener('keydown', onKey);
  }, [enabled, inDialog]);
}
