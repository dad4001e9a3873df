// One builder's whole journey through the UI, on a fresh database: register, start a project,
// add a drawing set and a photo, calibrate, measure, enter the figures, find the misprint, have a
// second person check a derived position, and take the shop sheet's PDF to the bench.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import type { Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mailedLink } from '../helpers/app';
import { resultsDir, screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';
import { readPdf } from '../helpers/pdf-text';
import { clickSheet } from '../helpers/sheet-canvas';
import { makePdf } from '../helpers/sheet-files';

let rig: BrowserRig;
beforeAll(async () => {
  rig = await startBrowserRig();
});
afterAll(() => rig?.close());

const builder = { name: 'Jo Pennant', email: 'jo.pennant@example.com', password: 'bedplate-1887' };
const checker = {
  name: 'Ada Whitcombe',
  email: 'ada.whitcombe@example.com',
  password: 'cross-check-42',
};
const projectName = 'Mill engine, bedplate';

/** A full-page shot from the top, wide tables scrolled back to their first column. */
async function shot(page: Page, name: string) {
  await page.evaluate(() => {
    window.scrollTo(0, 0);
    for (const el of document.querySelectorAll<HTMLElement>('.n-data-table *')) {
      if (el.scrollLeft > 0) el.scrollLeft = 0;
    }
  });
  await screenshot(page, `journey/${name}`);
}

// ---- the files ---------------------------------------------------------------------------------

/*
 * The drawing set: two pages of 720 × 504 pt. Sheets frame a PDF page at 150 dpi, so a point is
 * 150/72 = 25/12 sheet px and a page is 1500 × 1050 px. Page 1 is the bedplate at half size: a
 * true inch is 36 pt on paper (75 px). Its scale bar runs 6 true inches, 72 → 288 pt (150 → 600
 * px, 450 px); the plate's top edge runs 10 true inches, 72 → 432 pt (150 → 900 px, 750 px).
 * The chain under it prints the misprint: 2 1/4 + 5 1/2 + 2 1/2 against an overall of 10.
 */
const drawing = {
  scaleBar: [
    { x: 150, y: 875 },
    { x: 600, y: 875 },
  ],
  plateTop: [
    { x: 150, y: 300 },
    { x: 900, y: 300 },
  ],
};

function drawBedplate(doc: PDFKit.PDFDocument, page: number) {
  const at = (inches: number) => 72 + inches * 36; // true inches along the plate → page points
  doc.lineWidth(1.2).strokeColor('#1b2a3a').fillColor('#1b2a3a');
  if (page === 2) {
    doc.fontSize(16).text('MILL ENGINE — CRANKSHAFT BEARING, FULL SIZE', 72, 40);
    doc.rect(144, 144, 288, 180).stroke();
    doc.circle(288, 234, 54).stroke();
    doc.circle(288, 234, 30).stroke();
    doc.fontSize(11).text('bore 1 1/4, bearing caps to suit', 144, 340);
    return;
  }
  doc.fontSize(16).text('MILL ENGINE — BEDPLATE, SIDE ELEVATION, HALF SIZE', 72, 40);
  // The plate, 10 × 3 true inches, and its two holding-down bolts 3/4 above the foot.
  doc.rect(at(0), 144, at(10) - at(0), 108).stroke();
  for (const x of [2.25, 7.75]) doc.circle(at(x), 252 - 0.75 * 36, 6).stroke();
  // The chain, as printed (2 1/2 should read 2 1/4), and the overall.
  const chainY = 288;
  doc.moveTo(at(0), chainY).lineTo(at(10), chainY).stroke();
  for (const x of [0, 2.25, 7.75, 10]) {
    doc
      .moveTo(at(x), chainY - 6)
      .lineTo(at(x), chainY + 6)
      .stroke();
  }
  doc.fontSize(12);
  doc.text('2 1/4', at(0.8), chainY - 18);
  doc.text('5 1/2', at(4.7), chainY - 18);
  doc.text('2 1/2', at(8.5), chainY - 18);
  doc.moveTo(at(0), 324).lineTo(at(10), 324).stroke();
  doc.text('10 OVERALL', at(4.3), 330);
  // The scale bar: 0 to 6 in, a tick each inch.
  const barY = 420;
  doc.moveTo(at(0), barY).lineTo(at(6), barY).stroke();
  for (let i = 0; i <= 6; i++) {
    doc
      .moveTo(at(i), barY - 5)
      .lineTo(at(i), barY + 5)
      .stroke();
  }
  doc.fontSize(10).text('0', at(0) - 3, barY + 8);
  doc.text('6 in', at(6) - 8, barY + 8);
  doc.text('SCALE', at(0), barY - 22);
}

/*
 * The photo of the full-size prototype, 1600 × 1000 px: the bedplate's side panel, 80 × 24 in,
 * seen from below its middle, so the rectangle is a symmetric trapezoid. Its corners (TL, TR,
 * BR, BL) are below. A perspective that keeps rows level maps each image row linearly, so along
 * the foot (row 700, from x 200 to 1400 = 80 in) the right bolt, 62 in from the left end (7 3/4
 * × 8 at 1:8), stands at 200 + 1200 × 62/80 = 1130.
 */
const photo = {
  corners: [
    { x: 400, y: 300 },
    { x: 1200, y: 300 },
    { x: 1400, y: 700 },
    { x: 200, y: 700 },
  ],
  leftEnd: { x: 200, y: 700 },
  rightBolt: { x: 1130, y: 700 },
};

async function photoJpeg(page: Page): Promise<Buffer> {
  const dataUrl = await page.evaluate((p) => {
    const c = document.createElement('canvas');
    [c.width, c.height] = [1600, 1000];
    const g = c.getContext('2d')!;
    const sky = g.createLinearGradient(0, 0, 0, 1000);
    sky.addColorStop(0, '#c9d6df');
    sky.addColorStop(0.72, '#e8e2d4');
    sky.addColorStop(0.72, '#8c7b64');
    sky.addColorStop(1, '#6e604c');
    g.fillStyle = sky;
    g.fillRect(0, 0, 1600, 1000);
    g.beginPath();
    p.corners.forEach((q, i) => (i ? g.lineTo(q.x, q.y) : g.moveTo(q.x, q.y)));
    g.closePath();
    g.fillStyle = '#4a5158';
    g.fill();
    g.lineWidth = 5;
    g.strokeStyle = '#1d2227';
    g.stroke();
    // The bolt bosses at the foot: left at 18 in, right at 62 in of 80.
    for (const x of [470, p.rightBolt.x]) {
      g.fillStyle = '#2a2f34';
      g.fillRect(x - 22, 640, 44, 60);
      g.strokeStyle = '#e0c060';
      g.lineWidth = 2;
      g.beginPath();
      g.moveTo(x, 620);
      g.lineTo(x, 720);
      g.stroke();
    }
    g.fillStyle = '#1b2a3a';
    g.font = '36px sans-serif';
    g.fillText('Prototype bedplate, full size: side panel 80 in × 24 in', 200, 120);
    return c.toDataURL('image/jpeg', 0.9);
  }, photo);
  return Buffer.from(dataUrl.split(',')[1]!, 'base64');
}

// ---- steps the journey repeats -----------------------------------------------------------------

async function newPage(width = 1280, height = 800): Promise<Page> {
  const context = await rig.browser.newContext({
    viewport: { width, height },
    acceptDownloads: true,
  });
  context.setDefaultTimeout(15_000);
  const page = await context.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  pageErrors.set(page, errors);
  return page;
}
const pageErrors = new Map<Page, string[]>();

async function openSheet(page: Page, title: string): Promise<Locator> {
  await page.getByRole('link', { name: 'Sheets', exact: true }).click();
  await page.getByTestId('sheet-list').getByRole('link', { name: title, exact: true }).click();
  await page.waitForURL(/\/sheets\/[0-9a-f-]+$/);
  const canvas = page.getByTestId('sheet-canvas');
  await canvas.waitFor();
  // A PDF page is rendered by pdf.js first: slow on a busy machine.
  await page.getByTestId('first-view').waitFor({ state: 'attached', timeout: 30_000 });
  return canvas;
}

/** Two pins with the pin tool, then the measure tool between them: answers the form's figure. */
async function measureBetweenPins(
  page: Page,
  canvas: Locator,
  ends: { x: number; y: number }[],
  name: string,
  label: string,
) {
  await page.getByTestId('tool-pin').click();
  for (const p of ends) await clickSheet(page, canvas, p);
  await page.getByTestId('tool-measure').click();
  for (const p of ends) await clickSheet(page, canvas, p);
  const form = page.getByTestId('measure-form');
  await form.waitFor();
  const shown = (await page.getByTestId('measure-value').innerText()).replace(/\s+/g, ' ');
  await page.locator('#measure-name').fill(name);
  await page.locator('#measure-label').fill(label);
  const strip = page.getByTestId('status-strip');
  const before = Number((await strip.innerText()).match(/revision (\d+)/)![1]);
  await page.getByTestId('measure-save').click();
  await form.waitFor({ state: 'hidden' });
  // One server operation writes the sheet's record and the model's next revision together.
  await expect.poll(() => strip.innerText()).toMatch(new RegExp(`revision ${before + 1}\\b`));
  expect(await strip.innerText()).not.toContain('unsaved');
  const tol = /±\s*([\d.]+)/.exec(shown)![1];
  // The list beside the sheet shows the scaled dimension as the model now holds it.
  await expect
    .poll(async () =>
      (await page.getByTestId(`measurement-${name}`).innerText()).replace(/\s+/g, ' '),
    )
    .toContain(`${/[\d.]+ in/.exec(shown)![0]} ±${tol}`);
  await expect.poll(() => page.getByTestId('sheet-save-state').innerText()).toContain('Saved');
  return { value: shown, tol: Number(tol) };
}

/** Saves the working model from the status strip and waits for the new revision. */
async function saveModel(page: Page) {
  const strip = page.getByTestId('status-strip');
  const before = Number((await strip.innerText()).match(/revision (\d+)/)![1]);
  await strip.getByRole('button', { name: 'Save', exact: true }).click();
  await expect.poll(() => strip.innerText()).toMatch(new RegExp(`revision ${before + 1}\\b`));
  expect(await strip.innerText()).not.toContain('unsaved');
}

async function commitCell(page: Page, label: string, text: string) {
  const cell = page.getByLabel(label, { exact: true });
  await cell.fill(text);
  await cell.press('Enter');
}

/** A new row of the table, renamed, then its figures typed into their cells. */
async function addDimension(
  page: Page,
  d: { name: string; value?: string; tol?: string; label: string; derived?: boolean },
) {
  // The table's own count ("8 of 8"): the new row's index is the number of rows before it.
  const rows = Number((await page.locator('.dims .count').innerText()).match(/of (\d+)/)![1]);
  await page.getByRole('button', { name: 'Add dimension', exact: true }).click();
  const nameCell = page.locator(`input[data-column="name"][data-row="${rows}"]`);
  await nameCell.fill(d.name);
  await nameCell.press('Enter');
  const row = page.locator(`[data-dimension="${d.name}"]`);
  await row.waitFor();
  if (d.derived) {
    await row.locator('.n-select').click();
    await page.locator('.n-base-select-option', { hasText: 'derived' }).click();
    await expect.poll(() => row.innerText()).toContain('solved');
  } else {
    await commitCell(page, `Value of ${d.name}`, d.value!);
    await commitCell(page, `Tolerance of ${d.name}`, d.tol!);
  }
  await commitCell(page, `Label of ${d.name}`, d.label);
}

async function addRelation(page: Page, expr: string): Promise<string> {
  await page.getByRole('button', { name: 'Add relation', exact: true }).click();
  const input = page.locator('input[data-relation]').last();
  await input.fill(expr);
  return (await input.getAttribute('data-relation'))!;
}

const rowText = async (page: Page, name: string) =>
  (await page.locator(`[data-dimension="${name}"]`).innerText()).replace(/\s+/g, ' ');

// ---- the journey -------------------------------------------------------------------------------

describe('a new builder’s journey, from an empty account to the shop sheet, in real browsers', () => {
  it(
    'registers, adds and calibrates sheets, measures, finds and fixes a misprint, has a value checked, and prints the derived position',
    { timeout: 240_000 },
    async () => {
      const page = await newPage();

      // 1. Register a new account: the mailed link signs it in, with no projects yet.
      await page.goto(`${rig.baseUrl}/register`);
      await page.locator('#register-name').fill(builder.name);
      await page.locator('#register-email').fill(builder.email);
      await page.locator('#register-password').fill(builder.password);
      await page.getByRole('button', { name: 'Create account' }).click();
      await page.getByTestId('register-mailed').waitFor();
      await page.goto(
        await mailedLink(rig.t, builder.email, `${rig.baseUrl}/confirm-email?token=`),
      );
      await page.getByTestId('confirm-email').click();
      await page.waitForURL(/\/projects$/);
      await page.getByText('No projects yet').waitFor();
      expect(await page.getByRole('navigation', { name: 'Account' }).innerText()).toContain(
        builder.name,
      );
      await shot(page, '01-registered');

      // 2. A project of their own, in inches.
      await page.getByRole('button', { name: 'New project' }).click();
      await page.locator('#project-name').fill(projectName);
      await page.getByRole('button', { name: 'Create project' }).click();
      await page.getByRole('heading', { name: projectName }).waitFor();
      await page.waitForURL(/\/projects\/[0-9a-f-]+$/);
      const projectUrl = page.url();
      expect(await page.locator('.head').innerText()).toMatch(/owner/);
      await shot(page, '02-project-created');

      // 3. The two-page drawing set and the photo, in one go: three sheets.
      await page.getByRole('link', { name: 'Sheets', exact: true }).click();
      await page.waitForURL(/\/sheets$/);
      const pdf = await makePdf(2, { size: [720, 504], draw: drawBedplate });
      const jpeg = await photoJpeg(page);
      await page.getByTestId('sheet-file-input').setInputFiles([
        { name: 'bedplate.pdf', mimeType: 'application/pdf', buffer: pdf },
        { name: 'prototype photo.jpg', mimeType: 'image/jpeg', buffer: jpeg },
      ]);
      const upload = page.getByTestId('upload-row').first();
      await expect.poll(() => upload.innerText(), { timeout: 30_000 }).toContain('added');
      const list = page.getByTestId('sheet-list');
      await expect.poll(() => list.getByRole('link').count()).toBe(3);
      const card = (title: string) =>
        list
          .locator('li', { has: page.getByRole('link', { name: title, exact: true }) })
          .innerText();
      expect(await card('bedplate, p. 1')).toMatch(/drawing · 1500 × 1050 px\s*· page 1 of 2/);
      expect(await card('bedplate, p. 2')).toMatch(/drawing · 1500 × 1050 px\s*· page 2 of 2/);
      expect(await card('prototype photo')).toMatch(/photo · 1600 × 1000 px/);
      expect(await card('prototype photo')).toContain('not calibrated');
      await shot(page, '03-sheets-uploaded');

      // 4a. The drawing, calibrated by two points on its scale bar: 6 in over 450 px.
      let canvas = await openSheet(page, 'bedplate, p. 1');
      expect(await page.getByTestId('calibration-badge').innerText()).toBe('not calibrated');
      await page.getByTestId('pick-reference').click();
      for (const p of drawing.scaleBar) await clickSheet(page, canvas, p);
      await page.locator('#cal-reference-length').fill('6');
      await page.getByTestId('apply-calibration').click();
      await expect
        .poll(() => page.getByTestId('calibration-badge').innerText())
        .toBe('calibrated: two points');
      // 6 / 450 = 0.013333… in per sheet px.
      expect(await page.getByTestId('calibration-summary').innerText()).toContain(
        '0.013333 in per sheet px',
      );
      await shot(page, '04a-drawing-calibrated');

      // 5a. The overall, scaled off the drawing: 750 px × 6/450 = 10 in, ± at least the 0.5 % floor.
      const overall = await measureBetweenPins(
        page,
        canvas,
        drawing.plateTop,
        'length_scaled',
        'overall, scaled off the drawing',
      );
      expect(overall.value).toContain('10.0000 in');
      expect(overall.tol).toBeGreaterThanOrEqual(0.05);
      await shot(page, '05a-drawing-measured');

      // 4b. The photo, by four corners of the 80 × 24 in panel, at the model's 1:8.
      canvas = await openSheet(page, 'prototype photo');
      const panel = page.getByTestId('calibration-panel');
      await panel.getByText('Four corners', { exact: true }).click();
      await panel.getByRole('button', { name: 'Pick four corners' }).click();
      for (const p of photo.corners) await clickSheet(page, canvas, p);
      await panel.getByText('4 of 4').waitFor();
      // These fields are named by the <label> around them, which also holds the input's
      // placeholder text: matched by the start of the name.
      await panel.getByLabel(/^Width/).fill('80');
      await panel.getByLabel(/^Height/).fill('24');
      // A JPEG comes in as a photo, and a photo is taken to be of the full-size prototype.
      expect(await panel.getByRole('checkbox').getAttribute('aria-checked')).toBe('true');
      await panel.getByLabel(/^Model scale/).fill('1:8');
      await panel.getByText('reads as 1:8').waitFor();
      await page.getByTestId('apply-calibration').click();
      await expect
        .poll(() => page.getByTestId('calibration-badge').innerText())
        .toBe('calibrated: four corners · prototype 1:8');
      expect(await page.getByTestId('calibration-summary').innerText()).toMatch(
        /perspective fitted through the four corners[\s\S]*prototype at 1:8/,
      );
      await shot(page, '04b-photo-calibrated');

      // 5b. Left end to the right bolt along the foot: 930 of 1200 px of 80 in = 62 in full size,
      // / 8 = 7.7500 in at model size.
      const span = await measureBetweenPins(
        page,
        canvas,
        [photo.leftEnd, photo.rightBolt],
        'photo_span',
        'left end to right bolt, off the photo',
      );
      expect(span.value).toContain('7.7500 in');
      // 0.5 % of 7.75 in.
      expect(span.tol).toBeGreaterThanOrEqual(0.03875);
      await shot(page, '05b-photo-measured');

      // 6. The figures of the drawing and the chains between them.
      await page.getByRole('link', { name: 'Dimensions & relations', exact: true }).click();
      await page.waitForURL(/\/model$/);
      await page.locator('[data-dimension="photo_span"]').waitFor();
      expect(await rowText(page, 'photo_span')).toContain('7.7500"');
      const given = [
        { name: 'length', value: '10', tol: '0.01', label: 'overall' },
        { name: 'end_a', value: '2 1/4', tol: '0.005', label: 'left end to left bolt' },
        { name: 'pitch', value: '5 1/2', tol: '0.005', label: 'bolt pitch' },
        { name: 'end_b', value: '2 1/2', tol: '0.005', label: 'right bolt to right end' },
        { name: 'bolt_y', value: '3/4', tol: '0.005', label: 'bolts above the foot' },
      ];
      for (const d of given) await addDimension(page, d);
      await addDimension(page, {
        name: 'bolt2_x',
        label: 'right bolt from the left end',
        derived: true,
      });
      const chain = await addRelation(page, 'length = end_a + pitch + end_b');
      await addRelation(page, 'length_scaled = length');
      await addRelation(page, 'photo_span = end_a + pitch');
      // The builder works the right bolt from the right-hand end, as the drawing invites.
      await addRelation(page, 'bolt2_x = length - end_b');
      const strip = page.getByTestId('status-strip');
      // The live solve lands a moment after the last keystroke: wait for the whole verdict.
      await expect.poll(() => strip.innerText()).toMatch(/1 contradiction on the drawing/);
      await expect.poll(() => strip.innerText()).toMatch(/2 cross-checks close/);
      await saveModel(page);
      await shot(page, '06-figures-entered');

      // 7a. It solves: bolt2_x = 10 − 2 1/2 = 7.5000; worst case 0.01 + 0.005 = ±0.0150,
      // RSS √(0.01² + 0.005²) = ±0.0112.
      expect(await rowText(page, 'bolt2_x')).toContain('7.5000" ±0.0150 worst case · ±0.0112 RSS');
      await page.locator('[data-dimension="bolt2_x"] .result').click();
      const detail = page.getByRole('region', { name: 'Selected dimension' });
      expect(await detail.getByTestId('detail-value').innerText()).toBe('7.5000"');
      expect(await detail.getByTestId('detail-wc').innerText()).toBe('±0.0150');
      await detail.getByTestId('stackup-chart').waitFor();
      await shot(page, '07a-derived-with-stack-up');
      // The chain does not close: 2 1/4 + 5 1/2 + 2 1/2 = 10 1/4 against 10, off by 0.2500 where
      // the tolerances allow 0.01 + 3 × 0.005 = ±0.0250. The photo (end_a + pitch) and the scale
      // (the overall) agree, so only end_b explains it all.
      const contradiction = page.getByTestId('contradiction');
      expect(await contradiction.count()).toBe(1);
      const found = (await contradiction.innerText()).replace(/\s+/g, ' ');
      expect(found).toContain(`Contradiction in ${chain}`);
      expect(found).toContain('Off by 0.2500"; the tolerances of its figures allow only ±0.0250');
      const first = contradiction.locator('.suspects li.first');
      expect(await first.locator('.suspect-name').innerText()).toBe('end_b');
      expect((await first.innerText()).replace(/\s+/g, ' ')).toContain(
        'written 2 1/2; a change of -0.2500 explains 100 %',
      );
      expect(await rowText(page, 'end_b')).toContain('first suspect');
      // The findings sit below the selected value in the side panel: close the value to see them.
      await detail.getByRole('button', { name: 'Close the selected dimension' }).click();
      await detail.getByTestId('detail-value').waitFor({ state: 'detached' });
      await shot(page, '07b-contradiction-first-suspect');

      // 7c. Trust the others: the offered figure is 2 1/2 − 0.2500 = 2 1/4.
      await first.getByRole('button', { name: /Trust the others/ }).click();
      expect(await page.getByLabel('Corrected value').inputValue()).toBe('2 1/4');
      await page
        .getByLabel('Reason')
        .fill(
          'The chain adds to 10 1/4; the photo and the scale bar agree with the other figures.',
        );
      await page.getByRole('button', { name: 'Apply', exact: true }).click();
      await expect.poll(() => contradiction.count()).toBe(0);
      expect(await strip.innerText()).toMatch(/Solved: 1 derived value/);
      expect(await strip.innerText()).toMatch(/3 cross-checks close/);
      expect(await page.getByLabel('Value of end_b', { exact: true }).inputValue()).toBe('2 1/4');
      // bolt2_x = 10 − 2 1/4 = 7.7500, the same stack-up.
      expect(await rowText(page, 'bolt2_x')).toContain('7.7500" ±0.0150 worst case · ±0.0112 RSS');
      // The fix, recorded as a correction of the drawing.
      const prompt = page.getByTestId('correction-prompt');
      expect(await prompt.locator('#correction-wrong').inputValue()).toBe('2 1/2');
      expect(await prompt.locator('#correction-corrected').inputValue()).toBe('2 1/4');
      await choose(
        fieldOf(prompt, 'Where the right figure came from', '.n-select'),
        'a photograph of the prototype',
      );
      await fieldOf(prompt, 'Source, in a few words').fill('prototype photo, foot of the bedplate');
      await prompt.getByRole('button', { name: 'Record the correction' }).click();
      await prompt.waitFor({ state: 'hidden' });
      await saveModel(page);
      await shot(page, '07c-misprint-fixed');

      // 8a. A checker, invited by e-mail.
      await page.getByRole('link', { name: 'Team', exact: true }).click();
      await page.locator('#invite-email').fill(checker.email);
      await page.locator('[data-role="checker"]').click();
      await page.getByRole('button', { name: 'Send the invitation' }).click();
      const invited = page.locator(`[data-invitation="${checker.email}"]`);
      await invited.waitFor();
      expect(await invited.innerText()).toMatch(/checker/);
      await shot(page, '08a-checker-invited');

      // 8b. In a second browser, from the mail: register, accept, land on the project.
      const link = await mailedLink(rig.t, checker.email, `${rig.baseUrl}/invitations/`);
      const guest = await newPage(1280, 800);
      await guest.goto(link);
      await guest.getByTestId('invitation-preview').waitFor();
      expect(await guest.locator('.auth').innerText()).toContain(projectName);
      await guest.getByRole('link', { name: 'Create an account' }).click();
      await guest.waitForURL(/\/register\?/);
      expect(await guest.locator('#register-email').inputValue()).toBe(checker.email);
      await guest.locator('#register-name').fill(checker.name);
      await guest.locator('#register-password').fill(checker.password);
      await guest.getByRole('button', { name: 'Create account' }).click();
      await guest.waitForURL(/\/invitations\//);
      await guest.getByTestId('accept-invitation').click();
      await guest.waitForURL(/\/projects\/[0-9a-f-]+$/);
      expect(guest.url()).toBe(projectUrl);
      await guest.getByRole('heading', { name: projectName }).waitFor();
      expect(await guest.locator('.head').innerText()).toMatch(/checker/);
      await shot(guest, '08b-checker-joined');

      // 8c. The checker signs off the derived position.
      await guest.getByRole('link', { name: 'Dimensions & relations', exact: true }).click();
      await guest.locator('[data-dimension="bolt2_x"] .result').click();
      const checkDetail = guest.getByRole('region', { name: 'Selected dimension' });
      expect(await checkDetail.getByTestId('detail-value').innerText()).toBe('7.7500"');
      const badge = checkDetail.getByTestId('check-badge');
      expect(await badge.getAttribute('data-check-state')).toBe('none');
      await checkDetail.getByTestId('check-value').click();
      await expect.poll(() => badge.getAttribute('data-check-state')).toBe('current');
      expect(await badge.innerText()).toContain(`by ${checker.name}`);
      await shot(guest, '08c-value-checked');

      // 9a. Back as the builder: the bedplate as a part, its right bolt placed by bolt2_x.
      await page.getByRole('link', { name: 'Parts & features', exact: true }).click();
      await page.getByRole('button', { name: 'Add part' }).click();
      const partForm = page.getByTestId('part-form');
      await fieldOf(partForm, 'Id').fill('bedplate');
      await partForm.getByLabel('Part name').fill('Bedplate');
      await partForm.getByRole('button', { name: 'Keep' }).click();
      await partForm.waitFor({ state: 'hidden' });
      await page.locator('[data-part="bedplate"]').waitFor();
      await page.getByRole('button', { name: 'Add feature' }).click();
      const featureForm = page.getByTestId('feature-form');
      await fieldOf(featureForm, 'Name on the shop sheet').fill('Holding-down bolt, right');
      await featureForm.getByLabel('X position').fill('bolt2_x');
      await featureForm.getByLabel('Y position').fill('bolt_y');
      // The BA series entry of the catalogue (not the free-typed tag offered above it).
      await featureForm.getByRole('textbox', { name: 'Thread' }).fill('2BA');
      await page.locator('.n-base-select-option--grouped', { hasText: /^2BA$/ }).click();
      await featureForm.getByTestId('thread-suggestion').waitFor();
      await featureForm.getByRole('button', { name: 'Keep' }).click();
      await featureForm.waitFor({ state: 'hidden' });
      const feature = page.locator('[data-feature="f1"]');
      expect((await feature.innerText()).replace(/\s+/g, ' ')).toMatch(
        /Holding-down bolt, right.*7\.7500, 0\.7500 ±0\.0150.*2BA clearance, free/,
      );
      await saveModel(page);
      await shot(page, '09a-part-and-feature');

      // 9b. The shop sheet: the position checked by the checker; the PDF carries the figures.
      await page.getByRole('link', { name: 'Shop sheet', exact: true }).click();
      const group = page.getByTestId('shop-sheet-group');
      await group.waitFor();
      expect(await group.count()).toBe(1);
      expect(await group.getByTestId('checked-by').innerText()).toBe(`Checked by ${checker.name}`);
      await shot(page, '09b-shop-sheet');

      const [download] = await Promise.all([
        page.waitForEvent('download'),
        page.getByRole('button', { name: 'PDF, A4' }).click(),
      ]);
      const pdfFile = path.join(resultsDir, 'journey', 'shop-sheet-a4.pdf');
      await download.saveAs(pdfFile);
      const { text } = await readPdf(readFileSync(pdfFile));
      const flat = text.replace(/\s+/g, ' ');
      expect(flat).toContain(projectName);
      expect(flat).toContain('Holding-down bolt, right');
      // X 7.7500 in = 196.850 mm, Y 0.7500 in = 19.050 mm (× 25.4 exactly).
      expect(flat).toMatch(/7\.7500 0\.7500 196\.850 19\.050/);
      expect(flat).toContain(`Checked by ${checker.name}`);
      // The correction, with where the right figure came from.
      expect(flat).toMatch(/end_b: 2 1\/2 corrected to 2 1\/4 .*photograph: prototype photo/);
      if (existsSync('/usr/bin/pdftoppm')) {
        // A look at the first page (poppler-utils, a Debian package).
        execFileSync('/usr/bin/pdftoppm', [
          '-r',
          '80',
          '-png',
          '-f',
          '1',
          '-l',
          '1',
          '-singlefile',
          pdfFile,
          path.join(resultsDir, 'journey', '09c-shop-sheet-pdf'),
        ]);
      }

      expect(pageErrors.get(page)).toEqual([]);
      expect(pageErrors.get(guest)).toEqual([]);
      await guest.context().close();
      await page.context().close();
    },
  );
});

/** The control (an input unless told) of a Naive UI form item, found by its label's text. */
/**
 * Picks an option of a Naive UI select and waits until the select shows it. A click that lands
 * while the menu is still opening can be lost; then the menu is closed and opened again.
 */
async function choose(select: Locator, option: string) {
  const page = select.page();
  for (let attempt = 1; ; attempt++) {
    await select.click();
    await page.locator('.n-base-select-option', { hasText: option }).click();
    try {
      await expect.poll(() => select.innerText(), { timeout: 3000 }).toContain(option);
      return;
    } catch (err) {
      if (attempt === 3) throw err;
      await page.keyboard.press('Escape');
    }
  }
}

function fieldOf(form: Locator, label: string, control = 'input'): Locator {
  return form
    .locator('.n-form-item')
    .filter({
      has: form.page().locator('.n-form-item-label', { hasText: new RegExp(`^\\s*${label}\\s*$`) }),
    })
    .locator(control)
    .first();
}
