import { chromium, type Browser, type Page } from 'playwright-core';

/** The demo accounts the server seeds on first start (README, "Demo accounts"). */
export const DEMO = {
  admin: { username: 'ada.admin', password: 'demo-admin-pass', name: 'Administrator' },
  engineer: { username: 'evan.engineer', password: 'demo-engineer-pass', name: 'Process engineer' },
  engineer2: { username: 'rosa.engineer', password: 'demo-engineer2-pass', name: 'Process engineer' },
  quality: { username: 'quinn.quality', password: 'demo-quality-pass', name: 'Quality' },
  operator: {
    username: 'olga.operator',
    password: 'demo-operator-pass',
    name: 'Line operator',
    badge: 'OP-1001',
    pin: '2468',
  },
} as const;

export function baseUrl(): string {
  const url = process.env.PHASEWRIGHT_BASE_URL;
  if (!url) throw new Error('Set PHASEWRIGHT_BASE_URL to the running server, e.g. http://127.0.0.1:3000');
  return url.replace(/\/$/, '');
}

/** Debian's chromium, never a downloaded browser. */
export function launchChromium(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
}

/**
 * A fresh context (no cookies) and page; collects uncaught page errors so a test can assert none happened.
 * `bypassCSP` lets an injected checker (axe-core) past the app's Content-Security-Policy.
 */
export async function freshPage(
  browser: Browser,
  viewport = { width: 1280, height: 800 },
  bypassCSP = false,
) {
  const context = await browser.newContext({ baseURL: baseUrl(), viewport, bypassCSP });
  const page = await context.newPage();
  const pageErrors: string[] = [];
  page.on('pageerror', (error) => pageErrors.push(error.message));
  return { context, page, pageErrors };
}

export async function signInWithPassword(page: Page, username: string, password: string): Promise<void> {
  await page.goto('/sign-in');
  await page.getByLabel('User name', { exact: true }).fill(username);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.getByTestId('signed-in-as').waitFor();
}

/** The names in the main navigation, in order. */
export async function navLabels(page: Page): Promise<string[]> {
  const links = page.getByRole('navigation', { name: 'Main' }).getByRole('link');
  return (await links.allTextContents()).map((t) => t.trim());
}

/** Serious and critical accessibility findings on the page as it is now (axe-core; see a11y-kit). */
export { seriousAxeFindings as axeFindings } from './a11y-kit';
