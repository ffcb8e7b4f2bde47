import { useCallback, useEffect, useReducer, useRef, type ReactNode } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { Link } from 'react-router';
import type { LineEvent } from '#shared/schemas/events';
import type { StationView } from '#shared/schemas/stations';
import { CalibrationResult } from '#src/components/calibrations/calibration-result';
import { SafetyCautions } from '#src/components/safety/safety-cautions';
import { Alert, Loading } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Kbd } from '#src/components/ui/kbd';
import { UnitCard } from '#src/components/units/unit-card';
import { useModels } from '#src/lib/queries/models';
import { unitKeys, useUnit } from '#src/lib/queries/units';
import { dialogOpen, useHotkeys } from '#src/lib/use-hotkeys';
import { stationKeys } from '../api/station-keys';
import { useAttendStation } from '../api/stations';
import { useStationEvents } from '../api/use-station-events';
import { LiveProgress } from './live-progress';
import { ConfirmPrintDialog, PrintPanel, useTravelerPrint } from './print-panel';
import { RecentUnits } from './recent-units';
import { RegisterUnitDialog } from './register-unit-dialog';
import { ScanField } from './scan-field';
import { StationHealth } from './station-health';
import {
  freshCalibration as freshOf,
  historyCalibration as historyOf,
  initialStationState,
  lastPrintOf,
  liveOf,
  needsReread,
  stationReducer,
} from './station-progress';
import { HistoryResult, HoldBanner, ScanProblem } from './station-states';

/** Reads of a unit the screen makes at most while an announced result is missing from them. */
const MAX_REREADS = 6;

/** What to do with a held unit when its newest result gives no more precise step. */
const HOLD_ACTION = 'Do not measure, program or ship it. Tag it and put it in the hold area for quality.';

/**
 * The operator's station screen: scan, watch the unit's measurement arrive and compute, read the verdict
 * and print the traveler. Everything works from the keyboard; the scan field keeps the focus. What is on
 * screen is the reducer in `station-progress.ts`; printing is `print-panel.tsx`.
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
  const { serial, elsewhere, scanError, dialog } = state;
  const unit = useUnit(serial);
  const models = useModels();
  const { mutate: attend, error: attendError } = useAttendStation();
  const detail = unit.data;
  const printing = useTravelerPrint({ serial, detail, lastPrint: lastPrintOf(state), dispatch });
  const { held } = printing;

  useEffect(() => {
    attend(station.id);
  }, [attend, station.id]);

  // After a modal dialog closes, Chrome reports the scan field as focused but inserts no typed text
  // until the field is focused afresh. A dialog closes in its own effect, which runs before this one in
  // the same commit, so the scan field is armed again before a scanner's next key can arrive.
  const dialogWasOpen = useRef(false);
  useEffect(() => {
    const open = dialog !== null;
    const input = scanRef.current;
    if (dialogWasOpen.current && !open && input && !dialogOpen()) {
      input.blur();
      input.focus({ preventScroll: true });
    }
    dialogWasOpen.current = open;
  }, [dialog]);
  // And once more when the dialog's close event has run (Escape, the Close button).
  const refocusScan = () =>
    window.setTimeout(() => {
      const input = scanRef.current;
      if (!input || dialogOpen()) return;
      input.blur();
      input.focus({ preventScroll: true });
    }, 50);
  const closeDialog = () => {
    dispatch({ type: 'close-dialog' });
    refocusScan();
  };

  const show = useCallback(
    (next: string) => {
      dispatch({ type: 'scanned', serial: next });
      void queryClient.invalidateQueries({ queryKey: unitKeys.detail(next) });
    },
    [queryClient],
  );

  const refuse = useCallback((message: string) => dispatch({ type: 'scan-refused', message }), []);

  const onEvent = (e: LineEvent) => {
    void queryClient.invalidateQueries({ queryKey: stationKeys.health(station.id) });
    if (e.type === 'station.heartbeat') return;
    if (e.type === 'calibration.committed' || e.type === 'programming.confirmed')
      void queryClient.invalidateQueries({ queryKey: stationKeys.recent(station.id) });
    void queryClient.invalidateQueries({ queryKey: unitKeys.detail(e.serial) });
    dispatch({ type: 'event', event: e });
  };

  const connection = useStationEvents(station.id, onEvent, () => {
    void queryClient.invalidateQueries({ queryKey: stationKeys.detail(station.id) });
    if (serial) void queryClient.invalidateQueries({ queryKey: unitKeys.detail(serial) });
  });

  const live = liveOf(state);

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
  const setRegistering = (s: string) => dispatch({ type: 'open-register', serial: s });

  useHotkeys({
    F2: () => (notFound && serial ? setRegistering(serial) : false),
    F8: () => printing.doPrint(false),
    F9: () => printing.togglePageSize(),
  });

  const freshCalibration = freshOf(live, detail);
  const busyPhase = live && (live.phase === 'received' || live.phase === 'computing');
  const historyCalibration = historyOf(live, detail);
  const latest = printing.latest;
  const holdAction =
    latest?.verdict === 'fail' && latest.nextAction.includes('hold') ? latest.nextAction : HOLD_ACTION;
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
          {detail ? <PrintPanel printing={printing} /> : null}
          <SafetyCautions />
          <StationHealth stationId={station.id} connection={connection} />
          {healthExtra}
          <RecentUnits stationId={station.id} onPick={show} />
        </aside>
      </div>
      <ConfirmPrintDialog
        open={dialog?.kind === 'confirm-print'}
        printing={printing}
        onCancel={closeDialog}
      />
      <RegisterUnitDialog
        serial={dialog?.kind === 'register' ? dialog.serial : null}
        models={allowedModels}
        onClose={closeDialog}
        onRegistered={(s) => {
          dispatch({ type: 'close-dialog' });
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
