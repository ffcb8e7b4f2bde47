import { QueryClient, QueryObserver } from '@tanstack/react-query';
import { describe, expect, it } from 'vitest';
import type { LineEvent } from '#shared/schemas/events';
import type { CalibrationView } from '#shared/schemas/calibrations';
import type { UnitDetail } from '#shared/schemas/units';
import {
  freshCalibration,
  historyCalibration,
  initialStationState,
  lastPrintOf,
  liveOf,
  needsReread,
  stationReducer,
  type StationAction,
  type StationState,
} from './station-progress';

const at = '2026-12-02T10:00:00.000Z';
const base = { stationId: 'st-1', unitId: 'u-1', measurementId: 'm-1', at };
const received = (serial: string): LineEvent => ({ type: 'measurement.received', serial, ...base });
const computing = (serial: string): LineEvent => ({ type: 'calibration.computing', serial, ...base });
const committed = (serial: string, calibrationId = 'c-new'): LineEvent => ({
  type: 'calibration.committed',
  serial,
  calibrationId,
  verdict: 'pass',
  ...base,
});

const run = (...actions: StationAction[]): StationState =>
  actions.reduce(stationReducer, initialStationState);
const ev = (event: LineEvent): StationAction => ({ type: 'event', event });

function detailWith(...ids: string[]): UnitDetail {
  return {
    unit: { serial: 'SN-1' },
    calibrations: ids.map((calibrationId) => ({ calibrationId, purpose: 'station' }) as CalibrationView),
    travelers: [],
  } as unknown as UnitDetail;
}

describe('the station screen state', () => {
  it('when a scan is refused, then the previous unit and its verdict leave the screen at once', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(received('SN-1')), ev(committed('SN-1')), {
      type: 'scan-refused',
      message: '“x” is too short for a serial.',
    });
    expect(s.serial).toBeNull();
    expect(liveOf(s)).toBeNull();
    expect(s.scanError).toMatch(/too short/);
  });

  it('when a new unit is scanned, then the previous result is gone and the new unit waits for the station', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(committed('SN-1')), {
      type: 'scanned',
      serial: 'SN-2',
    });
    expect(s.serial).toBe('SN-2');
    expect(liveOf(s)).toEqual({ serial: 'SN-2', phase: 'waiting' });
    expect(s.scanError).toBeNull();
  });

  it('when the unit being measured is scanned again, then its progress is kept', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(computing('SN-1')), {
      type: 'scanned',
      serial: 'sn-1',
    });
    expect(liveOf(s)?.phase).toBe('computing');
  });

  it('follows the station when nothing is on screen, but not over a refused scan the operator must read', () => {
    expect(run(ev(received('SN-9'))).serial).toBe('SN-9');
    const refused = run({ type: 'scan-refused', message: 'no' }, ev(received('SN-9')));
    expect(refused.serial).toBeNull();
    expect(refused.elsewhere).toBe('SN-9');
  });

  it('offers a unit measured elsewhere without replacing the one on screen', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(received('SN-2')));
    expect(s.serial).toBe('SN-1');
    expect(s.elsewhere).toBe('SN-2');
    expect(liveOf(s)?.phase).toBe('waiting');
  });

  it("shows a unit's stored result only as history, and never while the station is measuring it", () => {
    const detail = detailWith('c-old');
    const waiting = run({ type: 'scanned', serial: 'SN-1' });
    expect(historyCalibration(liveOf(waiting), detail)?.calibrationId).toBe('c-old');
    const busy = stationReducer(waiting, ev(received('SN-1')));
    expect(historyCalibration(liveOf(busy), detail)).toBeUndefined();
  });
});

describe('a result that must not go missing', () => {
  it('when the result is announced but the read of the unit lacks it, then the unit is read again', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(committed('SN-1', 'c-new')));
    const live = liveOf(s);
    expect(needsReread(live, detailWith('c-old'), false)).toBe(true);
    expect(needsReread(live, detailWith('c-old'), true)).toBe(false); // a read is on its way: wait for it
    expect(needsReread(live, detailWith('c-new', 'c-old'), false)).toBe(false);
    expect(freshCalibration(live, detailWith('c-new'))?.calibrationId).toBe('c-new');
  });

  it('why: an announcement that arrives during the first read of a unit does not start a new read', async () => {
    // The cause of a result that once stayed "Fetching…" until the next attempt: the screen scanned a
    // unit (first read on its way), the result committed and was announced, and invalidating the
    // query handed back the read already running, taken before the commit.
    const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
    let stored: UnitDetail = detailWith('c-old');
    let reads = 0;
    let release = () => {};
    const firstReadHeld = new Promise<void>((resolve) => (release = resolve));
    const observer = new QueryObserver(client, {
      queryKey: ['line', 'units', 'detail', 'SN-1'],
      queryFn: async () => {
        reads += 1;
        const snapshot = stored;
        if (reads === 1) await firstReadHeld;
        return snapshot;
      },
    });
    const stop = observer.subscribe(() => {});
    await Promise.resolve();
    stored = detailWith('c-new', 'c-old'); // the calibration commits…
    const invalidated = client.invalidateQueries({ queryKey: ['line', 'units'] }); // …and is announced
    release();
    await invalidated;
    const seen = observer.getCurrentResult();
    expect(reads).toBe(1);
    expect(seen.data?.calibrations.map((c) => c.calibrationId)).toEqual(['c-old']);

    // The screen's rule sees the gap and reads again, which finds the result.
    const live = liveOf(run({ type: 'scanned', serial: 'SN-1' }, ev(committed('SN-1', 'c-new'))));
    expect(needsReread(live, seen.data, seen.isFetching)).toBe(true);
    await observer.refetch();
    const after = observer.getCurrentResult();
    expect(freshCalibration(live, after.data)?.calibrationId).toBe('c-new');
    expect(needsReread(live, after.data, after.isFetching)).toBe(false);
    stop();
    client.clear();
  });
});

describe('the station screen state: printing and dialogs', () => {
  const printed = (serial: string, printNumber = 1): StationAction => ({
    type: 'printed',
    print: {
      serial,
      printNumber,
      pageSize: 'A4',
      travelerId: 't-1',
      sha256: 'ab',
      url: '/api/units/x/travelers/t-1',
      blocked: false,
    },
  });

  it('when a traveler was printed, then the print shows until another unit is scanned', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, ev(committed('SN-1')), printed('SN-1'));
    expect(lastPrintOf(s)?.printNumber).toBe(1);
    expect(
      lastPrintOf(
        run({ type: 'scanned', serial: 'SN-1' }, printed('SN-1'), { type: 'scanned', serial: 'SN-2' }),
      ),
    ).toBeNull();
  });

  it('when the station measures the unit on screen again, then its last print no longer shows', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, printed('SN-1'), ev(received('SN-1')));
    expect(lastPrintOf(s)).toBeNull();
  });

  it('when another unit is measured elsewhere, then the print of the unit on screen stays', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, printed('SN-1'), ev(received('SN-2')));
    expect(s.elsewhere).toBe('SN-2');
    expect(lastPrintOf(s)?.serial).toBe('SN-1');
  });

  it('when a scan is refused, then the last print leaves the screen with the unit', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, printed('SN-1'), {
      type: 'scan-refused',
      message: 'no',
    });
    expect(lastPrintOf(s)).toBeNull();
  });

  it('when the serial differs only in letter case, then it is the same unit', () => {
    const s = run({ type: 'scanned', serial: 'SN-1' }, printed('sn-1'));
    expect(lastPrintOf(s)?.serial).toBe('sn-1');
  });

  it('when a dialog opens, then one dialog is open at a time and closing it leaves the unit on screen', () => {
    let s = run({ type: 'scanned', serial: 'SN-9' }, { type: 'open-register', serial: 'SN-9' });
    expect(s.dialog).toEqual({ kind: 'register', serial: 'SN-9' });
    s = stationReducer(s, { type: 'confirm-print' });
    expect(s.dialog).toEqual({ kind: 'confirm-print' });
    s = stationReducer(s, { type: 'close-dialog' });
    expect(s.dialog).toBeNull();
    expect(s.serial).toBe('SN-9');
  });
});
