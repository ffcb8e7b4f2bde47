import { afterEach, beforeEach, vi } from 'vitest';

// A test that makes anything print through console.error fails: errors must be asserted, not ignored.
let errors: unknown[][] = [];
beforeEach(() => {
  errors = [];
  vi.spyOn(console, 'error').mockImplementation((...args: unknown[]) => {
    errors.push(args);
  });
});
afterEach(() => {
  vi.restoreAllMocks();
  if (errors.length > 0) {
    const text = errors.map((a) => a.map(String).join(' ')).join('\n');
    throw new Error(`console.error was called during the test:\n${text}`);
  }
});
