import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoBuilder, demoChecker, demoPassword, demoProjectName } from '../../server/demo/seed';
import { screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';
import { clickSheet } from '../helpers/sheet-canvas';

let rig: BrowserRig;
beforeAll(async () => {
  rig = await startBrowserRig();
});
afterAll(() => rig?.close());

async function signIn(page: Page, email: string) {
  await page.goto(`${rig.baseUrl}/sign-in`);
  await page.locator('#sign-in-email').fill(email);
  await page.locator('#sign-in-password').fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/projects$/);
  await page.getByRole('link', { name: new RegExp(demoProjectName.slice(0, 20)) }).click();
  await page.getByRole('heading', { name: demoProjectName }).waitFor();
}

/** A drawing of our own, drawn in the page: a plate 1,200 px long between two marks. */
async function drawingPng(page: Page, noise: boolean): Promise<Buffer> {
  const dataUrl = await page.evaluate((grain) => {
    const c = document.createElement('canvas');
    [c.width, c.height] = [2400, 1600];
    const g = c.getContext('2d')!;
    g.fillStyle = '#fbfaf5';
    g.fillRect(0, 0, c.width, c.height);
    if (grain) {
      // Paper grain that does not compress, so the upload takes long enough to watch.
      const img = g.getImageData(0, 0, c.width, c.height);
      let seed = 3;
      for (let i = 0; i < img.data.length; i += 4) {
        seed = (seed * 16807) % 2147483647;
        const v = 236 + (seed % 20);
        img.data[i] = img.data[i + 1] = v;
        img.data[i + 2] = v - 6;
      }
      g.putImageData(img, 0, 0);
    }
    g.strokeStyle = '#1b2a3a';
    g.lineWidth = 4;
    g.strokeRect(100, 100, 2200, 1400);
    g.lineWidth = 3;
    g.strokeRect(400, 500, 1200, 500);
    for (const x of [700, 1300]) {
      g.beginPath();
      g.arc(x, 750, 120, 0, Math.PI * 2);
      g.stroke();
    }
    g.beginPath();
    g.moveTo(400, 1100);
    g.lineTo(1600, 1100);
    g.stroke();
    g.font = '40px sans-serif';
    g.fillStyle = '#1b2a3a';
    g.fillText('TEST PLATE — overall 12 1/2', 400, 1160);
    return c.toDataURL('image/png');
  }, noise);
  return Buffer.from(dataUrl.split(',')[1]!, 'base64');
}

describe('sheets on the canvas, in a real browser', () => {
  it('the builder uploads a drawing with a progress bar, calibrates it by two points, and measures a scaled dimension between two pins', async () => {
    const context = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
    context.setDefaultTimeout(10_000);
    const page = await context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await signIn(page, demoBuilder.email);
    await page.getByRole('link', { name: 'Sheets', exact: true }).click();
    await page.waitForURL(/\/sheets$/);

    // Upload through a slowed link, so the bar is seen filling.
    const png = await drawingPng(page, true);
    expect(png.length).toBeGreaterThan(1_000_000);
    const cdp = await context.newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Network.emulateNetworkConditions', {
      offline: false,
      latency: 20,
      downloadThroughput: -1,
      uploadThroughput: 2 * 1024 * 1024,
    });
    await page
      .locator('[data-testid=sheet-file-input]')
      .setInputFiles([{ name: 'test-plate.png', mimeType: 'image/png', buffer: png }]);
    const row = page.locator('[data-testid=upload-row]').first();
    await row.waitFor();
    const bar = row.locator('[data-testid=upload-progress]');
    await bar.waitFor();
    await expect.poll(() => row.textContent()).toMatch(/MB of .* MB|checking and storing/);
    await screenshot(page, 'sheets-uploading');
    await expect.poll(() => row.textContent(), { timeout: 20_000 }).toContain('added');
    await cdp.send('Network.emulateNetworkConditions', {
      offline: false,
      latency: 0,
      downloadThroughput: -1,
      uploadThroughput: -1,
    });
    await screenshot(page, 'sheets-uploaded');

    await page.getByRole('link', { name: 'test-plate' }).click();
    await page.waitForURL(/\/sheets\/[0-9a-f-]+$/);
    const canvas = page.locator('[data-testid=sheet-canvas]');
    await canvas.waitFor();
    await page.getByTestId('first-view').waitFor({ state: 'attached' });
    expect(await page.getByTestId('calibration-badge').textContent()).toContain('not calibrated');

    // Two-point calibration along the 1,200 px line; a wrong length is refused and kept.
    await page.getByTestId('pick-reference').click();
    await clickSheet(page, canvas, { x: 400, y: 1100 });
    await clickSheet(page, canvas, { x: 1600, y: 1100 });
    await page.locator('#cal-reference-length').fill('12 1/2 furlongs');
    await page.getByTestId('apply-calibration').click();
    await page
      .getByText(/Cannot read/)
      .first()
      .waitFor();
    expect(await page.locator('#cal-reference-length').inputValue()).toBe('12 1/2 furlongs');
    await screenshot(page, 'sheet-calibration-refused');
    await page.locator('#cal-reference-length').fill('12 1/2');
    await page.getByTestId('apply-calibration').click();
    await expect
      .poll(() => page.getByTestId('calibration-badge').textContent())
      .toContain('calibrated: two points');
    expect(await page.getByTestId('calibration-summary').textContent()).toContain('per sheet px');
    await screenshot(page, 'sheet-calibrated');

    // Two pins, then a measurement between them (600 px = 6 1/4 in at 1,200 px to 12 1/2 in).
    await page.getByTestId('tool-pin').click();
    await clickSheet(page, canvas, { x: 700, y: 750 });
    await clickSheet(page, canvas, { x: 1300, y: 750 });
    await page.getByTestId('tool-measure').click();
    await clickSheet(page, canvas, { x: 700, y: 750 });
    await clickSheet(page, canvas, { x: 1300, y: 750 });
    const form = page.getByTestId('measure-form');
    await form.waitFor();
    const shown = (await page.getByTestId('measure-value').textContent())!;
    expect(shown).toContain('6.2500 in');
    const tol = Number(/±\s*([\d.]+)/.exec(shown)![1]);
    // The engine's floor for a scaled length: 0.5 % of it, or 2 px at the local scale.
    expect(tol).toBeGreaterThanOrEqual(6.25 * 0.005 - 1e-9);
    await screenshot(page, 'sheet-measure-form');
    await page.locator('#measure-name').fill('1bad name');
    await page.getByTestId('measure-save').click();
    await page.getByText(/a letter or _/).waitFor();
    await page.locator('#measure-name').fill('boss_ctrs');
    await page.locator('#measure-label').fill('boss centres');
    const strip = page.getByTestId('status-strip');
    const modelRevision = Number((await strip.textContent())!.match(/revision (\d+)/)![1]);
    await page.getByTestId('measure-save').click();
    await form.waitFor({ state: 'hidden' });

    // The scaled dimension, with its tolerance, in the list and the model (status strip).
    const listed = page.getByTestId('measurement-boss_ctrs');
    await listed.waitFor();
    expect(await listed.textContent()).toMatch(/6\.2500 in\s*±0\.03\d\d/);
    // The measurement is one server operation: the sheet's record and the model's new revision
    // are written together, so nothing is left unsaved on either side.
    await expect
      .poll(() => strip.textContent())
      .toMatch(new RegExp(`revision ${modelRevision + 1}\\b`));
    expect(await strip.textContent()).not.toContain('unsaved');
    await expect.poll(() => page.getByTestId('sheet-save-state').textContent()).toContain('Saved');
    await screenshot(page, 'sheet-measured');
    const ids = /projects\/([0-9a-f-]+)\/sheets\/([0-9a-f-]+)/.exec(page.url())!;
    const stored = await page.evaluate(
      async ([projectId, sheetId]) => {
        const sheet = await (await fetch(`/api/projects/${projectId}/sheets/${sheetId}`)).json();
        const model = await (await fetch(`/api/projects/${projectId}/model`)).json();
        return {
          method: sheet.calibration?.method,
          pins: sheet.pins.length,
          measurements: sheet.measurements,
          dimension: model.model.dimensions.find((d: { name: string }) => d.name === 'boss_ctrs'),
        };
      },
      [ids[1], ids[2]] as const,
    );
    expect(stored.method).toBe('two-point');
    expect(stored.pins).toBe(2);
    expect(stored.measurements).toHaveLength(1);
    expect(stored.measurements[0].dimension).toBe('boss_ctrs');
    expect(stored.dimension).toMatchObject({
      kind: 'scaled',
      value: '6.2500 in',
      sheet: ids[2],
      label: 'boss centres',
    });
    expect(Number.parseFloat(stored.dimension.tol)).toBeCloseTo(tol, 3);

    // Undo takes the measurement record off the sheet, redo puts it back.
    await canvas.focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => listed.count()).toBe(0);
    await page.keyboard.press('Control+Shift+z');
    await listed.waitFor();

    // A pin's label is typed in the list, kept as typed, and named by the measurement.
    const labels = page.getByLabel('Pin label');
    await labels.first().click();
    await page.keyboard.type('left boss');
    expect(await labels.first().inputValue()).toBe('left boss');
    await page.keyboard.press('Enter');
    await expect.poll(() => listed.textContent()).toContain('left boss');
    expect(await labels.first().inputValue()).toBe('left boss');
    expect(errors).toEqual([]);
    await context.close();
  });

  it('a checker on a tablet opens a calibrated demo sheet read-only, and can pan and zoom', async () => {
    const context = await rig.browser.newContext({
      viewport: { width: 1024, height: 768 },
      hasTouch: true,
    });
    context.setDefaultTimeout(10_000);
    const page = await context.newPage();
    await signIn(page, demoChecker.email);
    await page.getByRole('link', { name: 'Sheets', exact: true }).click();
    const list = page.getByTestId('sheet-list');
    await list.waitFor();
    expect(await page.getByTestId('sheet-drop').count()).toBe(0);
    await list.getByRole('link').first().click();
    const canvas = page.getByTestId('sheet-canvas');
    await canvas.waitFor();
    await page.getByTestId('first-view').waitFor({ state: 'attached' });
    expect(await page.getByRole('toolbar').textContent()).toContain('read only');
    expect(await page.getByTestId('tool-pin').count()).toBe(0);
    const before = JSON.parse((await canvas.getAttribute('data-view'))!) as { zoom: number };
    await page.getByRole('button', { name: 'Zoom in' }).click();
    const after = JSON.parse((await canvas.getAttribute('data-view'))!) as { zoom: number };
    expect(after.zoom / before.zoom).toBeCloseTo(1.25, 6);
    await screenshot(page, 'sheet-tablet-read-only');
    await context.close();
  });
});
