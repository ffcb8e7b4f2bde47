import { useState, type Dispatch } from 'react';
import type { PageSize } from '#shared/schemas/travelers';
import type { UnitDetail } from '#shared/schemas/units';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { Kbd } from '#src/components/ui/kbd';
import { usePrintTraveler } from '#src/lib/queries/units';
import type { LastPrint, StationAction } from './station-progress';

const PAGE_SIZE_KEY = 'phasewright.station.pageSize';

function storedPageSize(): PageSize {
  try {
    return window.localStorage.getItem(PAGE_SIZE_KEY) === 'LETTER' ? 'LETTER' : 'A4';
  } catch {
    return 'A4';
  }
}

/** The panel's paper size, remembered on this panel. */
function usePageSize(): [PageSize, (size: PageSize) => void] {
  const [pageSize, setPageSizeState] = useState<PageSize>(storedPageSize);
  const setPageSize = (size: PageSize) => {
    setPageSizeState(size);
    try {
      window.localStorage.setItem(PAGE_SIZE_KEY, size);
    } catch {
      // A locked-down browser keeps the choice for this session only.
    }
  };
  return [pageSize, setPageSize];
}

/**
 * The unit's latest result with a verdict, and whether its traveler has been printed. A traveler that
 * has not been rendered yet is rendered by the print itself, so a result is always printable.
 */
function travelerState(detail: UnitDetail | null | undefined) {
  const latest = detail?.calibrations.find((c) => c.purpose === 'station' && c.verdict !== 'unusable');
  if (!detail || !latest) return { latest: undefined, reprint: false };
  const docs = detail.travelers.filter((t) => t.createdAt >= latest.computedAt);
  return { latest, reprint: docs.some((t) => t.printNumber > 1) };
}

/**
 * Printing the traveler of the unit on screen: what may be printed, whether it is a reject or hold
 * document (printed only when asked twice), and the print itself, which opens the PDF in a new tab.
 */
export function useTravelerPrint({
  serial,
  detail,
  lastPrint,
  dispatch,
}: {
  serial: string | null;
  detail: UnitDetail | null | undefined;
  /** The last print of the unit on screen (`lastPrintOf`). */
  lastPrint: LastPrint | null;
  dispatch: Dispatch<StationAction>;
}) {
  const print = usePrintTraveler();
  const [pageSize, setPageSize] = usePageSize();
  const trav = travelerState(detail);
  const held = detail?.unit.status === 'on_hold';
  const rejected = held || trav.latest?.verdict === 'fail';
  const blocked = !detail
    ? 'Scan a unit first.'
    : !trav.latest
      ? 'Nothing to print: this unit has no result yet.'
      : null;

  const doPrint = (confirmed = false) => {
    if (!serial || blocked || print.isPending) return;
    // A failed or held unit's traveler is a reject document: print it only when asked twice.
    if (rejected && !confirmed) {
      dispatch({ type: 'confirm-print' });
      return;
    }
    dispatch({ type: 'close-dialog' });
    // Open the tab inside the key press or click, or the browser's pop-up blocker refuses it later.
    const tab = window.open('about:blank', '_blank');
    print.mutate(
      { serial, pageSize },
      {
        onSuccess: (doc) => {
          if (tab) tab.location.href = doc.url;
          dispatch({ type: 'printed', print: { ...doc, serial, blocked: !tab } });
        },
        onError: () => tab?.close(),
      },
    );
  };

  return {
    print,
    pageSize,
    setPageSize,
    togglePageSize: () => setPageSize(pageSize === 'A4' ? 'LETTER' : 'A4'),
    latest: trav.latest,
    held,
    rejected,
    blocked,
    isReprint: trav.reprint || lastPrint !== null,
    lastPrint,
    doPrint,
  };
}

type TravelerPrint = ReturnType<typeof useTravelerPrint>;

const paperName = (size: PageSize) => (size === 'A4' ? 'A4' : 'US Letter');

/** The traveler panel beside the unit: paper size (F9), print or reprint (F8), and the last print. */
export function PrintPanel({ printing }: { printing: TravelerPrint }) {
  const { print, pageSize, setPageSize, rejected, held, blocked, isReprint, lastPrint, doPrint } = printing;
  return (
    <section aria-labelledby="print-title" className="flex flex-col gap-2" data-testid="print-panel">
      <h2 id="print-title" className="text-sm font-semibold tracking-widest text-graphite-400 uppercase">
        Traveler
      </h2>
      <div role="group" aria-label="Paper size" className="grid grid-cols-2 gap-2">
        {(['A4', 'LETTER'] as const).map((size) => (
          <button
            key={size}
            type="button"
            aria-pressed={pageSize === size}
            aria-keyshortcuts="F9"
            onClick={() => setPageSize(size)}
            className={`flex min-h-target items-center justify-center gap-2 border-2 font-semibold ${
              pageSize === size
                ? 'border-copper-400 bg-graphite-800 text-graphite-50'
                : 'border-graphite-700 text-graphite-300 hover:border-graphite-500'
            }`}
          >
            <span
              aria-hidden
              className={`inline-block size-3 rounded-full border-2 ${pageSize === size ? 'border-copper-300 bg-copper-300' : 'border-graphite-500'}`}
            />
            {paperName(size)}
          </button>
        ))}
      </div>
      <Button
        variant={rejected ? 'danger' : 'primary'}
        size="lg"
        onClick={() => doPrint(false)}
        disabled={blocked !== null}
        busy={print.isPending}
        aria-keyshortcuts="F8"
        aria-describedby={blocked ? 'print-blocked' : undefined}
        data-testid="print-button"
      >
        {rejected
          ? `${isReprint ? 'Reprint' : 'Print'} ${held ? 'hold' : 'reject'} traveler`
          : isReprint
            ? 'Reprint traveler'
            : 'Print traveler'}{' '}
        <Kbd>F8</Kbd>
      </Button>
      {blocked ? (
        <p id="print-blocked" className="text-sm text-graphite-300">
          {blocked}
        </p>
      ) : (
        <p className="text-sm text-graphite-300">Paper size: press F9 to switch.</p>
      )}
      {print.isError ? (
        <Alert tone="fault" title="Not printed">
          {print.error.message}
        </Alert>
      ) : null}
      {lastPrint ? (
        <p className="text-graphite-100" role="status" data-testid="print-result">
          {lastPrint.printNumber === 1
            ? 'Print 1'
            : `Reprint ${lastPrint.printNumber - 1} (print ${lastPrint.printNumber})`}{' '}
          · {paperName(lastPrint.pageSize)} ·{' '}
          <a href={lastPrint.url} target="_blank" rel="noreferrer" data-testid="print-link">
            {lastPrint.blocked ? 'open the PDF (the browser blocked the new tab)' : 'open the PDF again'}
          </a>
        </p>
      ) : null}
    </section>
  );
}

/** Asks once more before a reject or hold traveler is printed. */
export function ConfirmPrintDialog({
  open,
  printing,
  onCancel,
}: {
  open: boolean;
  printing: TravelerPrint;
  onCancel: () => void;
}) {
  const { held, doPrint } = printing;
  return (
    <Dialog
      open={open}
      onClose={onCancel}
      title={held ? 'Print the traveler of a unit on hold?' : 'Print the traveler of a failed unit?'}
      description={
        held
          ? 'This unit is on hold. Its traveler is printed marked ON HOLD, to travel with the unit to the hold area. It does not release the unit.'
          : 'This unit failed. Its traveler is printed marked REJECT, to travel with the unit to repair or quality. It does not release the unit.'
      }
    >
      <div className="flex flex-wrap gap-3" data-testid="confirm-print">
        <Button variant="danger" size="lg" onClick={() => doPrint(true)}>
          Print {held ? 'ON HOLD' : 'REJECT'} traveler
        </Button>
        <Button size="lg" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </Dialog>
  );
}
