import { useCallback, useEffect, useReducer, useRef, useState, type ReactNode } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { Link } from 'react-router';
import type { LineEvent } from '../../../../shared/schemas/events';
import type { StationView, UnitDetail } from '../../../../shared/schemas/line';
import { Alert, Loading } from '../../../components/ui/alert';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { Kbd } from '../../../components/ui/kbd';
import {
  useAttendStation,
  useModels,
  usePrintTraveler,
  useUnit,
  type PageSize,
  type PrintedTraveler,
} from '../api/line';
import { lineKeys } from '../api/line-keys';
import { useStationEvents } from '../api/use-station-events';
import { CalibrationResult } from './calibration-result';
import { LiveProgress } from './live-progress';
import { RecentUnits } from './recent-units';
import { RegisterUnitDialog } from './register-unit-dialog';
import { SafetyCautions } from './safety-cautions';
import { ScanField } from './scan-field';
import { StationHealth } from './station-health';
import {
  freshCalibration as freshOf,
  historyCalibration as historyOf,
  initialStationState,
  liveOf,
  needsReread,
  sameSerial,
  stationReducer,
} from './station-progress';
import { HistoryResult, HoldBanner, ScanProblem } from './station-states';
import { UnitCard } from './unit-card';

const PAGE_SIZE_KEY = 'phasewright.station.pageSize';

/** Reads of a unit the screen makes at most while an announced result is missing from them. */
const MAX_REREADS = 6;

/** What to do with a held unit when its newest result gives no more precise step. */
const HOLD_ACTION = 'Do not measure, program or ship it. Tag it and put it in the hold area for quality.';

function dialogOpen(): boolean {
  return document.querySelector('dialog[open]') !== null;
}

function storedPageSize(): PageSize {
  try {
    return window.localStorage.getItem(PAGE_SIZE_KEY) === 'LETTER' ? 'LETTER' : 'A4';
  } catch {
    return 'A4';
  }
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
 * The operator's station screen: scan, watch the unit's measurement arrive and compute, read the verdict
 * and print the traveler. Everything works from the keyboard; the scan field keeps the focus.
 */
export function StationScreen({
  station,
  healthExtra,
  banner,
}: {
  station: StationView;
  /** Shown under the station's health (the route puts the station's open chart alerts there). */
  healthExtra?: ReactNode;
  /** Shown above the scan field (the route puts the station's qualification state there). */
  banner?: ReactNode;
}) {
  const queryClient = useQueryClient();
  const scanRef = useRef<HTMLInputElement>(null);
  const [state, dispatch] = useReducer(stationReducer, initialStationState);
  const { serial, elsewhere, scanError } = state;
  const [registering, setRegistering] = useState<string | null>(null);
  const [confirmingPrint, setConfirmingPrint] = useState(false);
  const [pageSize, setPageSizeState] = useState<PageSize>(storedPageSize);
  const [lastPrint, setLastPrint] = useState<(PrintedTraveler & { serial: string; blocked: boolean }) | null>(
    null,
  );
  const unit = useUnit(serial);
  const models = useModels();
  const print = usePrintTraveler();
  const { mutate: attend, error: attendError } = useAttendStation();

  useEffect(() => {
    attend(station.id);
  }, [attend, station.id]);

  // After a modal dialog closes, Chrome reports the scan field as focused but inserts no typed text
  // until the field is focused afresh. A dialog closes in its own effect, which runs before this one in
  // the same commit, so the scan field is armed again before a scanner's next key can arrive.
  const dialogWasOpen = useRef(false);
  useEffect(() => {
    const open = registering !== null || confirmingPrint;
    const input = scanRef.current;
    if (dialogWasOpen.current && !open && input && !dialogOpen()) {
      input.blur();
      input.focus({ preventScroll: true });
    }
    dialogWasOpen.current = open;
  }, [registering, confirmingPrint]);
  // And once more when the dialog's close event has run (Escape, the Close button).
  const refocusScan = () =>
    window.setTimeout(() => {
      const input = scanRef.current;
      if (!input || dialogOpen()) return;
      input.blur();
      input.focus({ preventScroll: true });
    }, 50);

  const show = useCallback(
    (next: string) => {
      dispatch({ type: 'scanned', serial: next });
      setLastPrint(null);
      void queryClient.invalidateQueries({ queryKey: lineKeys.unit(next) });
    },
    [queryClient],
  );

  const refuse = useCallback((message: string) => {
    dispatch({ type: 'scan-refused', message });
    setLastPrint(null);
  }, []);

  const onEvent = (e: LineEvent) => {
    void queryClient.invalidateQueries({ queryKey: lineKeys.stationHealth(station.id) });
    if (e.type === 'station.heartbeat') return;
    if (e.type === 'calibration.committed' || e.type === 'programming.confirmed')
      void queryClient.invalidateQueries({ queryKey: lineKeys.stationRecent(station.id) });
    void queryClient.invalidateQueries({ queryKey: lineKeys.unit(e.serial) });
    if (e.type === 'measurement.received' && sameSerial(e.serial, serial)) setLastPrint(null);
    dispatch({ type: 'event', event: e });
  };

  const connection = useStationEvents(station.id, onEvent, () => {
    void queryClient.invalidateQueries({ queryKey: lineKeys.station(station.id) });
    if (serial) void queryClient.invalidateQueries({ queryKey: lineKeys.unit(serial) });
  });

  const detail = unit.data;
  const live = liveOf(state);
  const trav = travelerState(detail);
  const held = detail?.unit.status === 'on_hold';
  const rejected = held || trav.latest?.verdict === 'fail';

  // A result announced while an earlier read of the unit was on its way is missing from that read:
  // read again (a few times at most) until it is there, so the screen never waits for the next event.
  const rereads = useRef({ calibrationId: '', count: 0 });
  const reread = needsReread(live, detail, unit.isFetching);
  const refetchUnit = unit.refetch;
  useEffect(() => {
    if (!reread || !live?.calibrationId) return;
    if (rereads.current.calibrationId !== live.calibrationId)
      rereads.current = { calibrationId: live.calibrationId, count: 0 };
    if (rereads.current.count >= MAX_REREADS) return;
    rereads.current.count += 1;
    const timer = window.setTimeout(() => void refetchUnit(), rereads.current.count === 1 ? 0 : 300);
    return () => window.clearTimeout(timer);
  }, [reread, live?.calibrationId, refetchUnit]);
  const allowedModels = (models.data ?? []).filter((m) => station.allowedModels.some((a) => a.id === m.id));
  const notFound = serial !== null && unit.isSuccess && detail === null;
  const printBlocked = !detail
    ? 'Scan a unit first.'
    : !trav.latest
      ? 'Nothing to print: this unit has no result yet.'
      : null;
  const isReprint = trav.reprint || sameSerial(lastPrint?.serial, serial);

  const setPageSize = (size: PageSize) => {
    setPageSizeState(size);
    try {
      window.localStorage.setItem(PAGE_SIZE_KEY, size);
    } catch {
      // A locked-down browser keeps the choice for this session only.
    }
  };

  const doPrint = (confirmed = false) => {
    if (!serial || printBlocked || print.isPending) return;
    // A failed or held unit's traveler is a reject document: print it only when asked twice.
    if (rejected && !confirmed) {
      setConfirmingPrint(true);
      return;
    }
    setConfirmingPrint(false);
    // Open the tab inside the key press or click, or the browser's pop-up blocker refuses it later.
    const tab = window.open('about:blank', '_blank');
    print.mutate(
      { serial, pageSize },
      {
        onSuccess: (doc) => {
          if (tab) tab.location.href = doc.url;
          setLastPrint({ ...doc, serial, blocked: !tab });
        },
        onError: () => tab?.close(),
      },
    );
  };

  const keys = useRef({ doPrint, notFound, serial, pageSize, setPageSize });
  useEffect(() => {
    keys.current = { doPrint, notFound, serial, pageSize, setPageSize };
  });
  useEffect(() => {
    const onKey = (event: KeyboardEvent) => {
      if (dialogOpen()) return;
      const k = keys.current;
      if (event.key === 'F2' && k.notFound && k.serial) {
        event.preventDefault();
        setRegistering(k.serial);
      } else if (event.key === 'F8') {
        event.preventDefault();
        k.doPrint(false);
      } else if (event.key === 'F9') {
        event.preventDefault();
        k.setPageSize(k.pageSize === 'A4' ? 'LETTER' : 'A4');
      }
    };
    document.addEventListener('keydown', onKey);
    return () => document.removeEventListener('keydown', onKey);
  }, []);

  const freshCalibration = freshOf(live, detail);
  const busyPhase = live && (live.phase === 'received' || live.phase === 'computing');
  const historyCalibration = historyOf(live, detail);
  const holdAction =
    trav.latest?.verdict === 'fail' && trav.latest.nextAction.includes('hold')
      ? trav.latest.nextAction
      : HOLD_ACTION;
  const unitModel = detail ? (models.data?.find((m) => m.id === detail.unit.model.id) ?? null) : null;

  return (
    <div className="flex flex-col gap-4" data-testid="station-screen">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div className="flex items-baseline gap-3">
          <h1 className="text-3xl font-bold tracking-wide text-graphite-50">
            Station <span className="text-copper-300">{station.name}</span>
          </h1>
          <span className="text-lg text-graphite-400">{station.line}</span>
          <span className="text-graphite-400">
            · makes {station.allowedModels.map((m) => m.code).join(', ') || 'no model yet'}
          </span>
        </div>
        <Link to="/station?choose=1" className="inline-flex min-h-target items-center px-2 font-semibold">
          Change station
        </Link>
      </div>
      {attendError ? (
        <Alert tone="fault" title="You are not recorded at this station">
          {attendError.message} Measurements will not name you until this works; sign in again or ask an
          administrator.
        </Alert>
      ) : null}
      <div className="grid items-start gap-5 lg:grid-cols-[minmax(0,1fr)_21rem] 2xl:grid-cols-[minmax(0,1fr)_27rem]">
        <div className="flex min-w-0 flex-col gap-4">
          {banner}
          <ScanField inputRef={scanRef} onScan={show} onRefused={refuse} busy={unit.isFetching} />
          {elsewhere ? (
            <div
              className="flex flex-wrap items-center justify-between gap-3 border-l-4 border-copper-400 bg-graphite-850 p-3 text-xl"
              role="status"
            >
              <p>
                The station is measuring <span className="font-mono font-semibold">{elsewhere}</span>, not the
                unit on screen.
              </p>
              <Button onClick={() => show(elsewhere)}>Show {elsewhere}</Button>
            </div>
          ) : null}
          {scanError ? (
            <ScanProblem title="Scan refused" testId="scan-refused">
              <p>{scanError}</p>
              <p className="text-graphite-200">No unit is on screen. Scan the serial label again.</p>
            </ScanProblem>
          ) : null}
          {serial === null && !scanError ? <IdleGuide /> : null}
          {serial !== null && unit.isPending ? <Loading label={`Looking up ${serial}…`} /> : null}
          {unit.isError ? (
            <Alert tone="fault" title={`Could not look up ${serial}`}>
              {unit.error.message}
            </Alert>
          ) : null}
          {notFound && serial ? (
            <ScanProblem title="Unknown serial" testId="unit-unknown">
              <p>
                <span className="font-mono font-bold">{serial}</span> is not registered.
              </p>
              <p className="text-xl text-graphite-200">
                Check the label. If the serial is right, register it against its model, then spin the unit.
                {station.allowedModels.length === 1
                  ? ` This station makes only ${station.allowedModels[0].code}: it also registers the unit by itself when it measures it.`
                  : ''}
              </p>
              <div>
                <Button
                  variant="primary"
                  size="lg"
                  onClick={() => setRegistering(serial)}
                  aria-keyshortcuts="F2"
                >
                  Register {serial} <Kbd>F2</Kbd>
                </Button>
              </div>
            </ScanProblem>
          ) : null}
          {detail && held ? <HoldBanner reason={detail.unit.holdReason} action={holdAction} /> : null}
          {detail && live && !held ? <LiveProgress phase={live.phase} verdict={live.verdict} /> : null}
          {detail && live?.phase === 'waiting' && !held ? (
            <p className="text-2xl text-graphite-100" data-testid="live-waiting">
              {detail.calibrations.length > 0
                ? 'The station has not measured this unit since it was scanned. Close the guard and spin it; the new result appears here.'
                : 'No measurement yet. Close the guard and start the station; the result appears here by itself.'}
            </p>
          ) : null}
          {busyPhase ? (
            <div
              className="chamfer chamfer-lg flex min-h-48 items-center justify-center gap-5 p-6"
              role="status"
              data-testid="computing"
            >
              <span
                aria-hidden
                className="inline-block size-14 animate-spin border-6 border-copper-400 border-t-transparent"
              />
              <span className="text-4xl font-bold tracking-wide text-graphite-50">
                {live?.phase === 'received' ? 'Measurement received' : 'Computing the offset…'}
              </span>
            </div>
          ) : null}
          {live?.phase === 'result' && !freshCalibration ? <Loading label="Fetching the result…" /> : null}
          {freshCalibration ? (
            <CalibrationResult calibration={freshCalibration} model={unitModel} fresh held={held} />
          ) : null}
          {historyCalibration ? <HistoryResult calibration={historyCalibration} /> : null}
        </div>
        <aside className="flex flex-col gap-4" aria-label="Unit, traveler and station">
          {detail ? <UnitCard unit={detail.unit} compact /> : null}
          {detail ? (
            <section aria-labelledby="print-title" className="flex flex-col gap-2" data-testid="print-panel">
              <h2
                id="print-title"
                className="text-sm font-semibold tracking-widest text-graphite-400 uppercase"
              >
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
                    {size === 'A4' ? 'A4' : 'US Letter'}
                  </button>
                ))}
              </div>
              <Button
                variant={rejected ? 'danger' : 'primary'}
                size="lg"
                onClick={() => doPrint(false)}
                disabled={printBlocked !== null}
                busy={print.isPending}
                aria-keyshortcuts="F8"
                aria-describedby={printBlocked ? 'print-blocked' : undefined}
                data-testid="print-button"
              >
                {rejected
                  ? `${isReprint ? 'Reprint' : 'Print'} ${held ? 'hold' : 'reject'} traveler`
                  : isReprint
                    ? 'Reprint traveler'
                    : 'Print traveler'}{' '}
                <Kbd>F8</Kbd>
              </Button>
              {printBlocked ? (
                <p id="print-blocked" className="text-sm text-graphite-300">
                  {printBlocked}
                </p>
              ) : (
                <p className="text-sm text-graphite-300">Paper size: press F9 to switch.</p>
              )}
              {print.isError ? (
                <Alert tone="fault" title="Not printed">
                  {print.error.message}
                </Alert>
              ) : null}
              {lastPrint && sameSerial(lastPrint.serial, serial) ? (
                <p className="text-graphite-100" role="status" data-testid="print-result">
                  {lastPrint.printNumber === 1
                    ? 'Print 1'
                    : `Reprint ${lastPrint.printNumber - 1} (print ${lastPrint.printNumber})`}{' '}
                  · {lastPrint.pageSize === 'A4' ? 'A4' : 'US Letter'} ·{' '}
                  <a href={lastPrint.url} target="_blank" rel="noreferrer" data-testid="print-link">
                    {lastPrint.blocked
                      ? 'open the PDF (the browser blocked the new tab)'
                      : 'open the PDF again'}
                  </a>
                </p>
              ) : null}
            </section>
          ) : null}
          <SafetyCautions />
          <StationHealth stationId={station.id} connection={connection} />
          {healthExtra}
          <RecentUnits stationId={station.id} onPick={show} />
        </aside>
      </div>
      <Dialog
        open={confirmingPrint}
        onClose={() => {
          setConfirmingPrint(false);
          refocusScan();
        }}
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
          <Button
            size="lg"
            onClick={() => {
              setConfirmingPrint(false);
              refocusScan();
            }}
          >
            Cancel
          </Button>
        </div>
      </Dialog>
      <RegisterUnitDialog
        serial={registering}
        models={allowedModels}
        onClose={() => {
          setRegistering(null);
          refocusScan();
        }}
        onRegistered={(s) => {
          setRegistering(null);
          show(s);
          refocusScan();
        }}
      />
    </div>
  );
}

function IdleGuide() {
  const steps = [
    ['Scan', 'the serial label on the unit'],
    ['Spin', 'with the guard closed: the station measures'],
    ['Read', 'the verdict here, then print the traveler'],
  ];
  return (
    <ol className="grid gap-3 sm:grid-cols-3" data-testid="idle-guide">
      {steps.map(([verb, rest], i) => (
        <li key={verb} className="chamfer chamfer-lg flex min-h-36 flex-col justify-center gap-1 p-5">
          <span className="font-mono text-copper-300">{i + 1}</span>
          <span className="text-3xl font-bold text-graphite-50">{verb}</span>
          <span className="text-graphite-300">{rest}</span>
        </li>
      ))}
    </ol>
  );
}
