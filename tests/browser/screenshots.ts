// Saves PNGs of the main client screens for review: `npx tsx tests/browser/screenshots.ts`.
// Needs a running server (PHASEWRIGHT_BASE_URL, default http://127.0.0.1:3000) with the demo accounts.
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';

process.env.PHASEWRIGHT_BASE_URL ??= 'http://127.0.0.1:3000';
const outDir = process.env.SHOTS_DIR ?? '/work/notes/shots';

async function main() {
  await mkdir(outDir, { recursive: true });
  const browser = await launchChromium();
  const shot = async (page: Page, name: string) => {
    await page.waitForLoadState('networkidle');
    const file = path.join(outDir, `${name}.png`);
    await page.screenshot({ path: file, fullPage: true });
    console.log(`saved ${file}`);
  };
  try {
    const anon = await freshPage(browser, { width: 1440, height: 900 });
    await anon.page.goto('/sign-in');
    await shot(anon.page, 'sign-in');
    await anon.page.getByRole('button', { name: 'Badge and PIN' }).click();
    await shot(anon.page, 'sign-in-badge');
    await anon.page.getByRole('button', { name: 'User name and password' }).click();
    await anon.page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await shot(anon.page, 'sign-in-errors');
    await anon.context.close();

    const admin = await freshPage(browser, { width: 1440, height: 900 });
    await signInWithPassword(admin.page, DEMO.admin.username, DEMO.admin.password);
    await shot(admin.page, 'home-admin');
    await admin.page.goto('/admin/people');
    await admin.page.getByTestId('people-rows').waitFor();
    await shot(admin.page, 'people');
    await admin.page.getByRole('button', { name: 'Add a person' }).click();
    await admin.page.getByRole('dialog').waitFor();
    await admin.page.screenshot({ path: path.join(outDir, 'people-create.png') });
    await admin.page.keyboard.press('Escape');
    await admin.page
      .getByRole('button', { name: /^Change / })
      .first()
      .click();
    await admin.page.getByRole('dialog').waitFor();
    await admin.page.screenshot({ path: path.join(outDir, 'people-edit.png') });
    await admin.page.keyboard.press('Escape');
    await admin.page.goto('/admin/outbox');
    await shot(admin.page, 'outbox');
    await admin.page.goto('/admin/audit');
    await shot(admin.page, 'audit');
    await admin.page.goto('/admin/system');
    await shot(admin.page, 'system');
    await admin.context.close();

    const operator = await freshPage(browser, { width: 1280, height: 800 });
    await signInWithPassword(operator.page, DEMO.operator.username, DEMO.operator.password);
    await shot(operator.page, 'home-operator');
    await operator.page.goto('/admin/people');
    await shot(operator.page, 'not-allowed');
    await operator.page.goto('/no/such/screen');
    await shot(operator.page, 'not-found');
    await operator.context.close();
  } finally {
    await browser.close();
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
