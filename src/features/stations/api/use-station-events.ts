import { useEffect, useRef, useState } from 'react';
import { lineEventSchema, type LineEvent } from '#shared/schemas/events';

export type EventsConnection = 'connecting' | 'live' | 'reconnecting';

const EVENT_TYPES: LineEvent['type'][] = [
  'measurement.received',
  'calibration.computing',
  'calibration.committed',
  'programming.confirmed',
  'traveler.ready',
  'station.heartbeat',
];

/** Longest wait between reconnection attempts after the browser gave up on the stream, ms. */
const MAX_BACKOFF_MS = 15_000;

/**
 * Follows a station's Server-Sent Events. The browser reconnects on its own after a dropped stream; when
 * it gives up (the server answered an error), this reconnects with a growing pause. `onResync` runs
 * every time the stream opens, because events sent before it was open are not replayed.
 */
export function useStationEvents(
  stationId: string,
  onEvent: (event: LineEvent) => void,
  onResync: () => void,
): EventsConnection {
  const [state, setState] = useState<EventsConnection>('connecting');
  const handlers = useRef({ onEvent, onResync });
  useEffect(() => {
    handlers.current = { onEvent, onResync };
  });

  useEffect(() => {
    let source: EventSource | null = null;
    let retryTimer: number | undefined;
    let backoffMs = 1000;
    let stopped = false;

    const connect = () => {
      source = new EventSource(`/api/stations/${encodeURIComponent(stationId)}/events`);
      source.onopen = () => {
        setState('live');
        backoffMs = 1000;
        // Also on the first opening: anything the station did between the screen's first reads and
        // this moment was never sent to it, so read again now that nothing more can be missed.
        handlers.current.onResync();
      };
      source.onerror = () => {
        setState('reconnecting');
        if (source?.readyState === EventSource.CLOSED && !stopped) {
          source.close();
          retryTimer = window.setTimeout(connect, backoffMs);
          backoffMs = Math.min(backoffMs * 2, MAX_BACKOFF_MS);
        }
      };
      for (const type of EVENT_TYPES) {
        source.addEventListener(type, (message) => {
          let data: unknown;
          try {
            data = JSON.parse((message as MessageEvent<string>).data);
          } catch {
            return;
          }
          const parsed = lineEventSchema.safeParse(data);
          if (parsed.success) handlers.current.onEvent(parsed.data);
        });
      }
    };
    connect();
    return () => {
      stopped = true;
      window.clearTimeout(retryTimer);
      source?.close();
    };
  }, [stationId]);

  return state;
}
