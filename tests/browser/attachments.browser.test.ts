import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { PNG } from 'pngjs';
import { describe, expect, it } from 'vitest';
import { axeFindings, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { apiSession } from './line-kit';

/** A small picture standing in for a photo of a returned motor's connector. */
function photo(): Buffer {
  const img = new PNG({ width: 64, height: 48 });
  for (let y = 0; y < 48; y++)
    for (let x = 0; x < 64; x++) img.data.set([120 + x, 90 + y, 60, 255], (y * 64 + x) * 4);
  return PNG.sync.write(img);
}

describe('attachments on an investigation', () => {
  it('quality attaches a photo, sees it listed with its SHA-256, downloads it, and a program renamed .png is refused', async () => {
    const quality = await apiSession(DEMO.quality.username, DEMO.quality.password);
    const inv = await quality.call<{ id: string; reference: string }>('POST', '/api/quality/investigations', {
      title: `Connector pins bent on return ${Date.now()}`,
      customerRef: 'RMA-7731',
    });
    const browser = await launchChromium();
    try {
      const { page: p, context, pageErrors } = await freshPage(browser, { width: 1440, height: 900 }, true);
      await signInWithPassword(p, DEMO.quality.username, DEMO.quality.password);
      await p.goto(`/quality/investigations/${inv.id}`);
      await p.getByRole('heading', { name: 'Attachments' }).waitFor();
      await p.getByText('No file attached yet.').waitFor();

      const bytes = photo();
      await p
        .getByLabel('File to attach')
        .setInputFiles({ name: 'connector photo.png', mimeType: 'image/png', buffer: bytes });
      await p.getByRole('button', { name: 'Attach file' }).click();
      await p.getByRole('status').filter({ hasText: 'Attached connector photo.png.' }).waitFor();
      const item = p
        .getByTestId('attachments')
        .getByRole('listitem')
        .filter({ hasText: 'connector photo.png' });
      const sha = createHash('sha256').update(bytes).digest('hex');
      expect(await item.textContent()).toContain(`SHA-256 ${sha}`);
      expect(await item.textContent()).toMatch(/PNG picture/);
      expect(await axeFindings(p)).toEqual([]);

      const download = p.waitForEvent('download');
      await item.getByRole('link', { name: 'Download connector photo.png' }).click();
      const file = await (await download).path();
      expect(createHash('sha256').update(readFileSync(file)).digest('hex')).toBe(sha);

      // A Windows program named like a picture: refused in plain words, nothing added to the list.
      const exe = Buffer.alloc(256);
      exe.write('MZ', 0, 'latin1');
      exe.writeUInt32LE(0x80, 0x3c);
      exe.write('PE\0\0', 0x80, 'latin1');
      await p
        .getByLabel('File to attach')
        .setInputFiles({ name: 'scope.png', mimeType: 'image/png', buffer: exe });
      await p.getByRole('button', { name: 'Attach file' }).click();
      await p.getByText(/cannot be attached: its contents are a Windows program/).waitFor();
      expect(await p.getByTestId('attachments').getByRole('listitem').count()).toBe(1);
      expect(await axeFindings(p)).toEqual([]);

      const shots = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');
      mkdirSync(shots, { recursive: true });
      await p.screenshot({ path: path.join(shots, 'quality-investigation-attachments.png'), fullPage: true });
      expect(pageErrors).toEqual([]);
      await context.close();
    } finally {
      await browser.close();
    }
  }, 120_000);
});
