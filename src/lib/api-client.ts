import { apiErrorSchema } from '#shared/schemas/auth';

export type ApiIssue = { path: string; message: string };

/** An error answered by the API (or a failure to reach it), with the server's stable dotted code. */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly issues: ApiIssue[];
  /** The raw body when it was JSON but not an error body (a 503 health report, for one). */
  readonly body: unknown;

  constructor(status: number, code: string, message: string, issues: ApiIssue[] = [], body?: unknown) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.issues = issues;
    this.body = body;
  }
}

export function isApiError(error: unknown): error is ApiError {
  return error instanceof ApiError;
}

type SessionLostHandler = () => void;
let onSessionLost: SessionLostHandler = () => {};

/** The app registers what to do when a signed-in call answers 401 (the session expired or was revoked). */
export function setSessionLostHandler(handler: SessionLostHandler): void {
  onSessionLost = handler;
}

type RequestOptions = {
  method?: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  body?: unknown;
  /**
   * Calls made without a session (sign-in, reset requests, asking who is signed in) handle 401 themselves;
   * every other 401 means the session is gone and sends the person to the sign-in page.
   */
  sessionRequired?: boolean;
  signal?: AbortSignal;
};

async function readError(response: Response): Promise<ApiError> {
  let body: unknown;
  try {
    body = await response.json();
  } catch {
    body = null;
  }
  const parsed = apiErrorSchema.safeParse(body);
  if (parsed.success) {
    const { code, message, issues } = parsed.data.error;
    return new ApiError(response.status, code, message, issues ?? []);
  }
  return new ApiError(
    response.status,
    'http.unexpected',
    `The server answered ${response.status} ${response.statusText || ''}`.trim() + '.',
    [],
    body ?? undefined,
  );
}

/** JSON over fetch with the session cookie; resolves to the parsed body (undefined for 202/204). */
export async function apiRequest<T>(path: string, options: RequestOptions = {}): Promise<T> {
  const { method = 'GET', body, sessionRequired = true, signal } = options;
  let response: Response;
  try {
    response = await fetch(path, {
      method,
      credentials: 'same-origin',
      headers:
        body === undefined
          ? { Accept: 'application/json' }
          : { Accept: 'application/json', 'Content-Type': 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
      signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause;
    throw new ApiError(
      0,
      'network.unreachable',
      'The Phasewright server cannot be reached. Check the network and try again.',
    );
  }
  if (!response.ok) {
    const error = await readError(response);
    if (response.status === 401 && sessionRequired) onSessionLost();
    throw error;
  }
  if (response.status === 202 || response.status === 204) return undefined as T;
  const text = await response.text();
  return (text ? JSON.parse(text) : undefined) as T;
}
