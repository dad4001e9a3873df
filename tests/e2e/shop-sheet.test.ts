import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoBuilder, demoPassword, demoProjectName } from '../../server/demo/seed';
import { resultsDir, screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';

let rig: BrowserRig;
let projectUrl = '';

beforeAll(async () => {
  rig = await startBrowserRig();
});
afterAll(() => rig?.close());

async function signedIn(width = 1280, height = 800): Promise<Page> {
  const context = await rig.browser.newContext({ viewport: { width, height } });
  context.setDefaultTimeout(10_000);
  const page = await context.newPage();
  await page.goto(`${rig.baseUrl}/sign-in`);
  await page.locator('#sign-in-email').fill(demoBuilder.email);
  await page.locator('#sign-in-password').fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/projects$/);
  if (!projectUrl) {
    await page.getByRole('link', { name: new RegExp(demoProjectName.slice(0, 20)) }).click();
    await page.waitForURL(/\/projects\/[0-9a-f-]+$/);
    projectUrl = page.url();
  }
  await page.evaluate(() => document.fonts.ready);
  return page;
}

describe('parts, the part drawing and the shop sheet, in a real browser', () => {
  it('lists the demo parts with their features, and the feature form suggests the tap drill', async () => {
    const page = await signedIn();
    await page.goto(`${projectUrl}/parts`);
    await page.locator('[data-part="frame_l"]').waitFor();
    expect(await page.locator('.part-card').count()).toBe(6);
    const table = page.getByTestId('feature-table');
    expect(await table.innerText()).toContain('7.3125, 0.5000');
    expect(await page.getByTestId('part-detail').innerText()).toMatch(
      /one stack with Frame plate, right/,
    );
    await screenshot(page, 'parts-frames');

    await page.locator('[data-part="hornblock"]').click();
    await page.locator('[data-feature="hb_flange_fwd"]').waitFor();
    await page
      .locator('[data-feature="hb_flange_fwd"]')
      .getByRole('button', { name: 'Edit' })
      .click();
    const form = page.getByTestId('feature-form');
    await form.waitFor();
    // 4BA at 75 % in number drills: #31 (3.048 mm), 70 % thread.
    expect(await page.getByTestId('thread-suggestion').innerText()).toMatch(/#31/);
    // A position that names no dimension is refused as it is typed.
    await page.getByLabel('X position').fill('hornblock.bolt_insett');
    await expect.poll(() => form.innerText()).toMatch(/No dimension named hornblock\.bolt_insett/);
    await screenshot(page, 'parts-feature-form');
    await form.getByRole('button', { name: 'Cancel' }).click();

    await page.locator('[data-part="steam_flange"]').click();
    await expect
      .poll(() => page.getByTestId('feature-table').innerText())
      .toMatch(/Pressure-bearing part/);
    await screenshot(page, 'parts-steam-flange');
    await page.context().close();
  });

  it('draws the frame plates and the pressure-bearing flange to scale', async () => {
    const page = await signedIn();
    await page.goto(`${projectUrl}/parts/frame_l`);
    const drawing = page.getByTestId('part-drawing');
    await drawing.waitFor();
    // 4 × 2 bolt holes, 2 cut-outs, 2 buffer-angle holes; the stretcher hole is not placed yet.
    expect(await drawing.locator('g.feature').count()).toBe(12);
    expect(await drawing.innerText()).toMatch(/Not drawn \(position open\): Stretcher/);
    await screenshot(page, 'part-frame');

    await page.goto(`${projectUrl}/parts/steam_flange`);
    await page.getByTestId('pressure-warning').waitFor();
    expect(await page.getByTestId('pressure-warning').innerText()).toMatch(/steam_flange\.pcd/);
    expect(await page.locator('circle.warn-ring').count()).toBe(3);
    await screenshot(page, 'part-steam-flange');

    await page.goto(`${projectUrl}/parts/hornblock`);
    await page.getByTestId('part-drawing').waitFor();
    await screenshot(page, 'part-hornblock');
    await page.context().close();
  });

  it('shows the print view, and the PDF pages render to PNG for a look', async () => {
    const page = await signedIn();
    await page.goto(`${projectUrl}/shop-sheet/print`);
    await page.getByTestId('shop-sheet-group').first().waitFor();
    expect(await page.getByTestId('shop-sheet-group').count()).toBe(5);
    // The demo's voided check shows first; the frames are not checked as a whole.
    expect(await page.getByTestId('checked-by').first().innerText()).toMatch(
      /CHECK VOID on 2 of \d+ positions — NOT CHECKED/,
    );
    expect(await page.getByTestId('pressure-box').innerText()).toMatch(/boiler code/);
    // The true-scale bar is 100 mm wide at 96 CSS px per inch: 377.95 px.
    const bar = await page.locator('.bar.mm').first().boundingBox();
    expect(bar!.width).toBeCloseTo((100 / 25.4) * 96, 0);
    await screenshot(page, 'shop-sheet-print');
    await page.emulateMedia({ media: 'print' });
    await screenshot(page, 'shop-sheet-print-media');

    // The PDFs, downloaded with the builder's session, rendered page by page with poppler's
    // pdftoppm (Debian package poppler-utils) into test-results/.
    mkdirSync(resultsDir, { recursive: true });
    for (const paper of ['a4', 'letter'] as const) {
      const res = await page.request.get(
        `${projectUrl.replace(/\/projects\//, '/api/projects/')}/shop-sheet.pdf?paper=${paper}`,
      );
      expect(res.status()).toBe(200);
      const file = path.join(resultsDir, `shop-sheet-${paper}.pdf`);
      writeFileSync(file, await res.body());
      if (existsSync('/usr/bin/pdftoppm')) {
        execFileSync('/usr/bin/pdftoppm', [
          '-r',
          '80',
          '-png',
          file,
          path.join(resultsDir, `shop-sheet-${paper}-page`),
        ]);
        const pngs = readdirSync(resultsDir).filter((f) =>
          f.startsWith(`shop-sheet-${paper}-page`),
        );
        expect(pngs.length).toBeGreaterThanOrEqual(5);
      }
    }
    await page.context().close();
  });
});
