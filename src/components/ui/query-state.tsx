import type { UseQueryResult } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { Alert, Loading } from './alert';

/**
 * The one way a screen shows a read's states: pending (a labelled spinner), failed (an alert with the
 * server's sentence), empty (your words, when `isEmpty` says so) and the data. The same words and shapes
 * on every screen, and no repeated `isPending`/`isError` blocks.
 */
export function QueryState<T>({
  query,
  pending,
  failed,
  isEmpty,
  empty,
  children,
}: {
  query: UseQueryResult<T, Error>;
  /** What is being fetched, e.g. "Fetching stations…". */
  pending: string;
  /** The alert's title when the read failed, e.g. "Stations could not be read". */
  failed: string;
  isEmpty?: (data: T) => boolean;
  empty?: ReactNode;
  children: (data: T) => ReactNode;
}) {
  if (query.isPending) return <Loading label={pending} />;
  if (query.isError)
    return (
      <Alert tone="fault" title={failed}>
        {query.error.message}
      </Alert>
    );
  if (isEmpty?.(query.data) && empty !== undefined) return <>{empty}</>;
  return <>{children(query.data)}</>;
}
