import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { DEMO, freshPage, launchChromium, navLabels, signInWithPassword } from './browser-kit';

let browser: Browser;
beforeAll(async () => {
  browser = await launchChromium();
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

// The role rules come from issue 2: admin can do everything, the other roles see their own areas only,
// and no role gets a link to a screen it would be refused.
const ADMIN_AREAS = ['Overview', 'People', 'Outbox', 'Audit log', 'System', 'Stations', 'Failed jobs'];
// Areas every role (or the operator as well as the admin) opens, between Overview and the admin areas.
const SHARED_AREAS = ['Station', 'Units'];

describe('the signed-in shell', { timeout: 45_000 }, () => {
  it('shows an administrator every admin area, with name and role in the header', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await signInWithPassword(page, DEMO.admin.username, DEMO.admin.password);
    expect(await navLabels(page)).toEqual([ADMIN_AREAS[0], ...SHARED_AREAS, ...ADMIN_AREAS.slice(1)]);
    expect(await page.getByTestId('signed-in-as').textContent()).toContain(DEMO.admin.name);
    expect(pageErrors).toEqual([]);
    await context.close();
  });

  for (const role of ['engineer', 'quality', 'operator'] as const) {
    it(`shows the ${role} only the areas that role may open`, async () => {
      const { context, page, pageErrors } = await freshPage(browser);
      await signInWithPassword(page, DEMO[role].username, DEMO[role].password);
      const labels = await navLabels(page);
      expect(labels).toContain('Overview');
      expect(labels).toContain('Units');
      if (role === 'operator') expect(labels).toContain('Station');
      else expect(labels).not.toContain('Station');
      for (const adminArea of ADMIN_AREAS.slice(1)) expect(labels).not.toContain(adminArea);
      expect(await page.getByTestId('home-role').textContent()).toBe(DEMO[role].name);
      expect(pageErrors).toEqual([]);
      await context.close();
    });

    it(`refuses the ${role} the people screen with the not-allowed view`, async () => {
      const { context, page } = await freshPage(browser);
      await signInWithPassword(page, DEMO[role].username, DEMO[role].password);
      await page.goto('/admin/people');
      await page.getByTestId('not-allowed').waitFor();
      expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe(
        'This screen is not open to your role',
      );
      expect(await page.getByTestId('people-rows').count()).toBe(0);
      await context.close();
    });
  }

  it('lists the seeded accounts on the people screen for the administrator', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await signInWithPassword(page, DEMO.admin.username, DEMO.admin.password);
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'People' }).click();
    const rows = page.getByTestId('people-rows');
    await rows.getByText(DEMO.operator.username, { exact: true }).waitFor();
    const text = (await rows.textContent()) ?? '';
    for (const account of Object.values(DEMO)) expect(text).toContain(account.username);
    expect(text).toContain(`Badge ${DEMO.operator.badge} + PIN`);

    // The search box narrows the table to one person.
    await page.getByLabel('Search people').fill('olga');
    await page.getByText('1 of ', { exact: false }).waitFor();
    expect(await rows.getByRole('row').count()).toBe(1);
    expect(pageErrors).toEqual([]);
    await context.close();
  });

  it('signs an operator in with a badge scan (code + Enter) and a PIN', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await page.goto('/sign-in');
    await page.getByRole('button', { name: 'Badge and PIN' }).click();
    const badge = page.getByLabel('Badge', { exact: true });
    await badge.waitFor();
    expect(await badge.evaluate((el) => el === document.activeElement)).toBe(true);
    // A keyboard-wedge scanner types fast and ends with Enter; Enter must move on to the PIN, not submit.
    await page.keyboard.type(DEMO.operator.badge, { delay: 5 });
    await page.keyboard.press('Enter');
    expect(
      await page.getByLabel('PIN', { exact: true }).evaluate((el) => el === document.activeElement),
    ).toBe(true);
    await page.keyboard.type(DEMO.operator.pin);
    await page.keyboard.press('Enter');
    await page.getByTestId('signed-in-as').waitFor();
    expect(await page.getByTestId('signed-in-as').textContent()).toContain(DEMO.operator.name);
    expect(pageErrors).toEqual([]);
    await context.close();
  });

  it('refuses a wrong password with a message and stays on the sign-in page', async () => {
    const { context, page } = await freshPage(browser);
    await page.goto('/sign-in');
    await page.getByLabel('User name', { exact: true }).fill('nobody.at.all');
    await page.getByLabel('Password', { exact: true }).fill('not-the-password');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    const alert = page.getByRole('alert').first();
    await alert.waitFor();
    expect(await alert.textContent()).toContain('not recognised');
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    await context.close();
  });

  it('signs out to the sign-in page, after which the shell sends people back there', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await signInWithPassword(page, DEMO.engineer.username, DEMO.engineer.password);
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await page.goto('/admin/people');
    await page.waitForURL((url) => url.pathname === '/sign-in');
    expect(new URL(page.url()).searchParams.get('next')).toBe('/admin/people');
    expect(pageErrors).toEqual([]);
    await context.close();
  });

  it('shows the not-found page for an address that does not exist', async () => {
    const { context, page } = await freshPage(browser);
    await signInWithPassword(page, DEMO.quality.username, DEMO.quality.password);
    await page.goto('/no/such/screen');
    await page.getByTestId('not-found').waitFor();
    expect(await page.getByTestId('not-found').textContent()).toContain('/no/such/screen');
    await context.close();
  });
});
