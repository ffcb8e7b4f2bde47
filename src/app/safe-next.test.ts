import { describe, expect, it } from 'vitest';
import { safeNextPath } from './safe-next';

// Open-redirect guard after sign-in; the attack forms are from the OWASP Unvalidated Redirects and
// Forwards Cheat Sheet (protocol-relative and backslash variants).
describe('returning after sign-in', () => {
  it('goes back to the screen the person asked for', () => {
    expect(safeNextPath('/admin/people?x=1')).toBe('/admin/people?x=1');
  });
  it('never leaves the site, whatever the link says', () => {
    for (const hostile of [
      '//evil.example/x',
      '/\\evil.example',
      'https://evil.example',
      'javascript:alert(1)',
    ]) {
      expect(safeNextPath(hostile)).toBe('/');
    }
  });
  it('goes home when nothing or the sign-in page itself was asked for', () => {
    expect(safeNextPath(null)).toBe('/');
    expect(safeNextPath('/sign-in?next=/x')).toBe('/');
  });
});
