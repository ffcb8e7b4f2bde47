import type { NextFunction, Request, Response } from 'express';
import { AppError } from './errors';

/**
 * Text the product never stores or looks up: NUL (PostgreSQL refuses it in text and JSON), other
 * control characters where no person could have typed them (paths and query strings), and lone UTF-16
 * surrogates (not text at all; they cannot be encoded as UTF-8). Checked once for every request,
 * before any route, so no such string reaches a query and answers 500.
 */
function problemIn(text: string, allowLayout: boolean): string | null {
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 0) return 'a NUL byte';
    if (c >= 0xd800 && c <= 0xdbff) {
      const next = text.charCodeAt(i + 1);
      if (next >= 0xdc00 && next <= 0xdfff) {
        i++;
        continue;
      }
      return 'a broken character (a lone UTF-16 surrogate)';
    }
    if (c >= 0xdc00 && c <= 0xdfff) return 'a broken character (a lone UTF-16 surrogate)';
    if (!allowLayout && (c < 32 || c === 127)) return 'a control character';
  }
  return null;
}

function refuse(where: string, what: string): AppError {
  return new AppError(
    400,
    'request.bad_characters',
    `The ${where} contains ${what}, which no valid request has.`,
  );
}

/** Every string and key in a parsed body, walked without recursion (a deeply nested body cannot overflow the stack). */
function bodyProblem(body: unknown): string | null {
  const stack: unknown[] = [body];
  while (stack.length > 0) {
    const v = stack.pop();
    if (typeof v === 'string') {
      const p = problemIn(v, true);
      if (p) return p;
    } else if (Array.isArray(v)) {
      for (const item of v) stack.push(item);
    } else if (v !== null && typeof v === 'object') {
      for (const [k, item] of Object.entries(v)) {
        const p = problemIn(k, true);
        if (p) return p;
        stack.push(item);
      }
    }
  }
  return null;
}

/** Refuses a request whose path, query or JSON body holds text no route could use (400, plain words). */
export function inputGuard(req: Request, _res: Response, next: NextFunction): void {
  let path: string;
  try {
    path = decodeURIComponent(req.path);
  } catch {
    return next(
      new AppError(400, 'request.bad_path', 'The address is not valid: a %-escape in it is not UTF-8 text.'),
    );
  }
  const inPath = problemIn(path, false);
  if (inPath) return next(refuse('address', inPath));
  const query = req.query as unknown;
  if (query && typeof query === 'object') {
    for (const [k, v] of Object.entries(query)) {
      for (const text of [k, ...(Array.isArray(v) ? v : [v])]) {
        if (typeof text !== 'string') continue;
        const p = problemIn(text, false);
        if (p) return next(refuse('query', p));
      }
    }
  }
  const inBody = req.bodyTextPlain ? null : bodyProblem(req.body);
  if (inBody) return next(refuse('body', inBody));
  next();
}
