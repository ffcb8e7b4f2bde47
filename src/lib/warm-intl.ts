/**
 * Pays the page's first use of Intl ahead of need, each part in a task of its own.
 *
 * The first number or date format a page makes costs far more than any later one: V8 builds the list of
 * locales that format supports from ICU's data, once per renderer process. Measured in headless chromium on
 * the 2-core reference machine: 40–70 ms for numbers (`Intl.NumberFormat`, `toLocaleString`), 10–20 ms for
 * dates, against under 1 ms for each one after. Left to chance it lands inside whatever first formats a number:
 * the statistics workspace's chart library does at its module's top level, so the module evaluation that
 * loads the control chart became one of the page's longest tasks. Done here, it runs while the page waits for
 * the network after its first render, alone in its task.
 */
export function warmIntlSoon(): void {
  idle(() => {
    // The numbers first (the dearer part), then the dates, in a task after it.
    new Intl.NumberFormat(navigator.language).format(1.5);
    setTimeout(() => {
      new Intl.DateTimeFormat('en-GB', { timeZone: 'UTC', hour: '2-digit' }).format(0);
    }, 0);
  });
}

/** When the main thread is idle, at the latest after 300 ms (before the first view's modules usually land). */
function idle(run: () => void) {
  if (typeof requestIdleCallback === 'function') requestIdleCallback(run, { timeout: 300 });
  else setTimeout(run, 0);
}
