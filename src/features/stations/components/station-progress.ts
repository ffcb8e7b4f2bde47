import type { LineEvent } from '#shared/schemas/events';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { UnitDetail } from '#shared/schemas/units';
import { sameSerial } from '#shared/schemas/serial';
import type { Verdict } from '#src/components/calibrations/calibration-format';
import type { PrintedTraveler } from '#src/lib/queries/units';

/**
 * What the station screen shows, as a pure reducer (the screen's state machine): which unit is on
 * screen, where its live measurement is, what a refused scan said, which dialog is open and what the
 * last print gave. Scans, station events and the operator's print and register steps are its only
 * inputs, so every rule about what replaces what can be tested without a browser.
 */

export type ProgressPhase = 'waiting' | 'received' | 'computing' | 'result';

export type LiveProgress = {
  serial: string;
  phase: ProgressPhase;
  calibrationId?: string;
  verdict?: Verdict;
};

export type StationState = {
  /** The unit on screen (as scanned or as the station reported it), or null. */
  serial: string | null;
  /** Why the last scan was refused; while set, no unit is on screen. */
  scanError: string | null;
  /** The unit's measurement since it came on screen: never a stored result from its history. */
  live: LiveProgress | null;
  /** A unit the station is measuring that is not the one on screen. */
  elsewhere: string | null;
  /** The open dialog: registering an unknown serial, or confirming a reject/hold traveler. */
  dialog: StationDialog;
  /** The last print of this screen (shown while its unit is on screen and not measured again). */
  lastPrint: LastPrint | null;
};

export type StationDialog = { kind: 'register'; serial: string } | { kind: 'confirm-print' } | null;
export type LastPrint = PrintedTraveler & { serial: string; blocked: boolean };

export type StationAction =
  | { type: 'scanned'; serial: string }
  | { type: 'scan-refused'; message: string }
  | { type: 'event'; event: LineEvent }
  | { type: 'open-register'; serial: string }
  | { type: 'confirm-print' }
  | { type: 'close-dialog' }
  | { type: 'printed'; print: LastPrint };

export const initialStationState: StationState = {
  serial: null,
  scanError: null,
  live: null,
  elsewhere: null,
  dialog: null,
  lastPrint: null,
};

export function stationReducer(state: StationState, action: StationAction): StationState {
  switch (action.type) {
    case 'scanned': {
      // Scanning the unit that is being measured keeps its progress; anything else starts afresh, so
      // the previous unit's verdict leaves the screen at once.
      const keep = sameSerial(state.live?.serial, action.serial) && state.live?.phase !== 'result';
      return {
        ...state,
        serial: action.serial,
        scanError: null,
        elsewhere: null,
        lastPrint: null,
        live: keep ? state.live : { serial: action.serial, phase: 'waiting' },
      };
    }
    case 'scan-refused':
      // A refused scan clears the unit too: the operator must never read the last unit's verdict as
      // the answer to the scan they just made.
      return {
        ...state,
        serial: null,
        live: null,
        elsewhere: null,
        lastPrint: null,
        scanError: action.message,
      };
    case 'event':
      return onEvent(state, action.event);
    case 'open-register':
      return { ...state, dialog: { kind: 'register', serial: action.serial } };
    case 'confirm-print':
      return { ...state, dialog: { kind: 'confirm-print' } };
    case 'close-dialog':
      return state.dialog === null ? state : { ...state, dialog: null };
    case 'printed':
      return { ...state, lastPrint: action.print };
  }
}

function onEvent(state: StationState, e: LineEvent): StationState {
  if (e.type === 'station.heartbeat' || e.type === 'programming.confirmed') return state;
  let next = state;
  if (!sameSerial(e.serial, state.serial)) {
    // With nothing on screen (and no refused scan to read), follow the station; otherwise offer the
    // other unit without switching.
    if (state.serial === null && state.scanError === null && e.type !== 'traveler.ready') {
      next = { ...state, serial: e.serial, elsewhere: null };
    } else {
      return e.type === 'traveler.ready' ? state : { ...state, elsewhere: e.serial };
    }
  }
  switch (e.type) {
    case 'measurement.received':
      // A new measurement of the unit makes the last print belong to an older result.
      return { ...next, lastPrint: null, live: { serial: e.serial, phase: 'received' } };
    case 'calibration.computing':
      return { ...next, live: { serial: e.serial, phase: 'computing' } };
    case 'calibration.committed':
      return {
        ...next,
        live: { serial: e.serial, phase: 'result', calibrationId: e.calibrationId, verdict: e.verdict },
      };
    case 'traveler.ready':
      // A print renders a missing traveler itself, so the screen needs nothing from this event.
      return next;
  }
}

/** The last print, while its unit is the one on screen. */
export function lastPrintOf(state: StationState): LastPrint | null {
  return state.lastPrint && sameSerial(state.lastPrint.serial, state.serial) ? state.lastPrint : null;
}

/** The live progress of the unit on screen, if it has any. */
export function liveOf(state: StationState): LiveProgress | null {
  return state.live && sameSerial(state.live.serial, state.serial) ? state.live : null;
}

/** The calibration the live result announced, once the unit's read contains it. */
export function freshCalibration(
  live: LiveProgress | null,
  detail: UnitDetail | null | undefined,
): CalibrationView | undefined {
  if (live?.phase !== 'result' || !live.calibrationId) return undefined;
  return detail?.calibrations.find((c) => c.calibrationId === live.calibrationId);
}

/**
 * Whether the unit must be read again: a result was announced but the unit's read does not hold it.
 * That happens when the announcement arrived while an earlier read was still on its way (the query
 * library then hands back that earlier read instead of starting a new one), so the screen reads again
 * whenever no read is running, until the result is there.
 */
export function needsReread(
  live: LiveProgress | null,
  detail: UnitDetail | null | undefined,
  fetching: boolean,
): boolean {
  return live?.phase === 'result' && !!live.calibrationId && !fetching && !freshCalibration(live, detail);
}

/** The newest stored station result, shown as history while the station has not measured the unit. */
export function historyCalibration(
  live: LiveProgress | null,
  detail: UnitDetail | null | undefined,
): CalibrationView | undefined {
  if (live && live.phase !== 'waiting') return undefined;
  return detail?.calibrations.find((c) => c.purpose === 'station');
}
