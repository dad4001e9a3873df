import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoBuilder, demoPassword, demoProjectName } from '../../server/demo/seed';
import {
  axeViolations,
  describeViolations,
  seriousOnly,
  walkByTab,
  walkProblems,
} from '../helpers/a11y';
import { TestClient, waitForMail } from '../helpers/app';
import { screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';

let rig: BrowserRig;
let guest: BrowserContext;
let builder: BrowserContext;
const ids = { project: '', sheet: '', part: '', invitation: '', reset: '' };

beforeAll(async () => {
  rig = await startBrowserRig();
  // The ids and single-use tokens the pages need, through the API as the demo builder.
  const api = new TestClient(rig.t.app);
  await api.login(demoBuilder.email, demoPassword);
  const { projects } = (await api.get('/api/projects').expect(200)).body as {
    projects: { id: string; name: string }[];
  };
  ids.project = projects.find((p) => p.name === demoProjectName)!.id;
  const { sheets } = (await api.get(`/api/projects/${ids.project}/sheets`).expect(200)).body as {
    sheets: { id: string }[];
  };
  ids.sheet = sheets[0]!.id;
  const model = (await api.get(`/api/projects/${ids.project}/model`).expect(200)).body as {
    model: { parts: { id: string }[] };
  };
  ids.part = model.model.parts[0]!.id;
  await api
    .post(`/api/projects/${ids.project}/invitations`, {
      email: 'a11y.mentor@example.com',
      role: 'checker',
    })
    .expect(201);
  ids.invitation = (await waitForMail(rig.t, 'a11y.mentor@example.com')).body.match(
    /\/invitations\/([\w-]+)/,
  )![1]!;
  const asker = new TestClient(rig.t.app);
  await asker.refresh();
  await asker.post('/api/auth/password-reset', { email: demoBuilder.email }).expect(202);
  ids.reset = (await waitForMail(rig.t, demoBuilder.email)).body.match(
    /reset-password\?token=([\w-]+)/,
  )![1]!;

  guest = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
  guest.setDefaultTimeout(10_000);
  builder = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
  builder.setDefaultTimeout(10_000);
  const page = await builder.newPage();
  await page.goto(`${rig.baseUrl}/sign-in`);
  await page.locator('#sign-in-email').fill(demoBuilder.email);
  await page.locator('#sign-in-password').fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/projects$/);
  await page.close();
});
afterAll(async () => {
  await guest?.close();
  await builder?.close();
  await rig?.close();
});

interface Dialog {
  name: string;
  /** Opens it on the page; answers the selector of the open dialog. */
  open: (page: Page) => Promise<string>;
}

interface MainPage {
  name: string;
  signedIn: boolean;
  path: () => string;
  /** A selector that is on the page once its data has loaded. */
  ready: string;
  /** Narrows a long page before the walk, where its rows are all alike. */
  prepare?: (page: Page) => Promise<void>;
  dialogs?: Dialog[];
}

/** Clicks the named button and answers the selector of the dialog that opens. */
const modal = (button: string) => async (page: Page) => {
  await page.getByRole('button', { name: button, exact: true }).click();
  await page.locator('[role=dialog]').waitFor();
  // Let the opening transition finish (endless ones, such as a spinner, aside), so colours are
  // measured as they end up.
  await page.waitForFunction(() =>
    document
      .getAnimations()
      .every(
        (a) => a.playState !== 'running' || a.effect?.getComputedTiming().endTime === Infinity,
      ),
  );
  return '[role=dialog]';
};

const project = () => `/projects/${ids.project}`;
const pages: MainPage[] = [
  { name: 'sign-in', signedIn: false, path: () => '/sign-in', ready: '#sign-in-email' },
  { name: 'register', signedIn: false, path: () => '/register', ready: '#register-email' },
  {
    name: 'password reset, asking',
    signedIn: false,
    path: () => '/reset-password',
    ready: '#reset-email',
  },
  {
    name: 'password reset, choosing',
    signedIn: false,
    path: () => `/reset-password?token=${ids.reset}`,
    ready: 'input[type=password]',
  },
  {
    name: 'invitation',
    signedIn: false,
    path: () => `/invitations/${ids.invitation}`,
    ready: '[data-testid=invitation-preview]',
  },
  {
    // The page asks for a press before it uses the link, so any token shows it.
    name: 'address confirmation',
    signedIn: false,
    path: () => `/confirm-email?token=${'x'.repeat(43)}`,
    ready: '[data-testid=confirm-email]',
  },
  { name: 'not found', signedIn: false, path: () => '/no-such-page', ready: 'h1' },
  {
    name: 'projects',
    signedIn: true,
    path: () => '/projects',
    ready: 'a.item',
    dialogs: [{ name: 'new project', open: modal('New project') }],
  },
  {
    name: 'project overview',
    signedIn: true,
    path: project,
    ready: '[data-testid=check-tally]',
    dialogs: [{ name: 'project details', open: modal('Edit details') }],
  },
  {
    name: 'dimensions & relations',
    signedIn: true,
    path: () => `${project()}/model`,
    ready: '[data-dimension="horn2_x"]',
    // Every row of the dimension table has the same controls: the walk takes the trailing horn's.
    prepare: async (page) => {
      await page.getByLabel('Find a dimension').fill('horn2');
      await page.locator('[data-dimension="horn1_x"]').waitFor({ state: 'detached' });
    },
    dialogs: [
      {
        name: 'a selected dimension',
        open: async (page) => {
          await page.locator('[data-dimension="horn2_bolt_aft_x"]').click();
          await page.getByTestId('stackup-chart').waitFor();
          return 'body';
        },
      },
    ],
  },
  {
    name: 'sheets',
    signedIn: true,
    path: () => `${project()}/sheets`,
    ready: '[data-testid=sheet-list] a',
  },
  {
    name: 'a sheet',
    signedIn: true,
    path: () => `${project()}/sheets/${ids.sheet}`,
    ready: '[data-testid=sheet-canvas] canvas',
  },
  {
    name: 'parts & features',
    signedIn: true,
    path: () => `${project()}/parts`,
    ready: '[data-testid=feature-table]',
    dialogs: [
      { name: 'part form', open: modal('Edit part') },
      { name: 'feature form', open: modal('Add feature') },
    ],
  },
  {
    name: 'a part',
    signedIn: true,
    path: () => `${project()}/parts/${ids.part}`,
    ready: '[data-testid=part-view]',
  },
  {
    name: 'shop sheet',
    signedIn: true,
    path: () => `${project()}/shop-sheet/print`,
    ready: '.saved-note',
  },
  { name: 'history', signedIn: true, path: () => `${project()}/history`, ready: '.history ol' },
  {
    name: 'checks & activity',
    signedIn: true,
    path: () => `${project()}/activity`,
    ready: '[data-testid=activity-entry]',
    dialogs: [{ name: 'correction', open: modal('Record a correction…') }],
  },
  { name: 'team', signedIn: true, path: () => `${project()}/team`, ready: '#invite-email' },
  {
    name: 'invitation, signed in as someone else',
    signedIn: true,
    path: () => `/invitations/${ids.invitation}`,
    ready: '[data-testid=accept-invitation]',
  },
];

async function open(p: MainPage): Promise<Page> {
  const page = await (p.signedIn ? builder : guest).newPage();
  await page.goto(`${rig.baseUrl}${p.path()}`);
  await page.locator(p.ready).first().waitFor();
  await page.waitForLoadState('networkidle');
  await p.prepare?.(page);
  return page;
}

const slug = (name: string) => name.replace(/[^a-z]+/g, '-').replace(/-$/, '');

/** Soft expectations, so one run reports both the axe findings and the keyboard ones. */
async function checkPage(page: Page, what: string, within = 'body') {
  // Each page names itself in the window title, before the product's name.
  expect.soft(await page.title(), `${what}: title`).toMatch(/^\S.* · Fairsheet$/);
  const serious = seriousOnly(await axeViolations(page));
  expect.soft(serious.length, `${what}: axe\n${describeViolations(serious)}`).toBe(0);
  const walk = await walkByTab(page, within);
  expect.soft(walk.controls.length, `${what}: controls found`).toBeGreaterThan(0);
  expect.soft(walkProblems(walk), `${what}: keyboard`).toEqual([]);
}

describe('every main page, with axe-core and the keyboard in a real browser', () => {
  for (const p of pages) {
    it(
      `${p.name}: no serious or critical WCAG 2 A/AA violations; Tab reaches every control, each named`,
      { timeout: 120_000 },
      async () => {
        const page = await open(p);
        await checkPage(page, p.name);
        await screenshot(page, `a11y-${slug(p.name)}`);
        for (const d of p.dialogs ?? []) {
          await page.reload();
          await page.locator(p.ready).first().waitFor();
          await p.prepare?.(page);
          const within = await d.open(page);
          await checkPage(page, `${p.name}, ${d.name}`, within);
          await screenshot(page, `a11y-${slug(p.name)}-${slug(d.name)}`);
        }
        await page.close();
      },
    );
  }
});

describe('the sheet canvas from the keyboard', () => {
  it(
    'Tab reaches the canvas; arrow keys pan it, + and - zoom it, 0 fits the sheet again',
    { timeout: 60_000 },
    async () => {
      const page = await open(pages.find((p) => p.name === 'a sheet')!);
      const canvas = page.getByTestId('sheet-canvas');
      const view = async () =>
        JSON.parse((await canvas.getAttribute('data-view'))!) as {
          x: number;
          y: number;
          zoom: number;
        };
      let presses = 0;
      while (!(await canvas.evaluate((el) => el === document.activeElement)) && presses < 60) {
        await page.keyboard.press('Tab');
        presses += 1;
      }
      expect(await canvas.evaluate((el) => el === document.activeElement)).toBe(true);
      expect(await canvas.getAttribute('aria-label')).toMatch(/arrow keys/i);
      const fitted = await view();

      await page.keyboard.press('+');
      const zoomed = await view();
      expect(zoomed.zoom / fitted.zoom).toBeCloseTo(1.25, 6);
      await page.keyboard.press('-');
      expect((await view()).zoom).toBeCloseTo(fitted.zoom, 9);

      await page.keyboard.press('ArrowRight');
      const panned = await view();
      expect(panned.x).toBeLessThan(fitted.x);
      expect(panned.y).toBeCloseTo(fitted.y, 9);
      await page.keyboard.press('ArrowDown');
      expect((await view()).y).toBeLessThan(panned.y);

      await page.keyboard.press('+');
      await page.keyboard.press('0');
      const again = await view();
      expect(again.zoom).toBeCloseTo(fitted.zoom, 9);
      expect(again.x).toBeCloseTo(fitted.x, 6);
      await page.close();
    },
  );

  it(
    'with the pin tool, a crosshair shows the keyboard where Enter places a pin; Shift+arrows aim in small steps; Delete takes the pin off',
    { timeout: 60_000 },
    async () => {
      const page = await open(pages.find((p) => p.name === 'a sheet')!);
      const canvas = page.getByTestId('sheet-canvas');
      const crosshair = page.locator('.sheet-canvas-crosshair');
      const stored = () =>
        page.evaluate(
          async ([project, sheet]) =>
            (await (await fetch(`/api/projects/${project}/sheets/${sheet}`)).json()).pins as {
              id: string;
              x: number;
              y: number;
            }[],
          [ids.project, ids.sheet] as const,
        );
      const before = await stored();
      const added = async () => {
        const known = new Set(before.map((p) => p.id));
        return (await stored()).filter((p) => !known.has(p.id));
      };

      // The tool by keyboard, then Tab on to the canvas.
      const tool = page.getByTestId('tool-pin');
      await tool.focus();
      await page.keyboard.press('Enter');
      expect(await tool.getAttribute('aria-pressed')).toBe('true');
      for (
        let i = 0;
        i < 30 && !(await canvas.evaluate((el) => el === document.activeElement));
        i++
      ) {
        await page.keyboard.press('Tab');
      }
      expect(await canvas.evaluate((el) => el === document.activeElement)).toBe(true);
      expect(await canvas.getAttribute('aria-label')).toMatch(/Enter places a point/);
      expect(await crosshair.isVisible()).toBe(true);
      const box = (await canvas.boundingBox())!;
      const mark = (await crosshair.boundingBox())!;
      // In the middle, to the pixel.
      expect(Math.abs(mark.x + mark.width / 2 - (box.x + box.width / 2))).toBeLessThanOrEqual(1);
      expect(Math.abs(mark.y + mark.height / 2 - (box.y + box.height / 2))).toBeLessThanOrEqual(1);

      await page.keyboard.press('Enter');
      await expect.poll(async () => (await added()).length).toBe(1);
      // Enter again on the same spot finds that pin rather than stacking another on it.
      await page.keyboard.press('Enter');
      // Ten small steps right move the sheet 60 screen px left under the crosshair.
      const { zoom } = JSON.parse((await canvas.getAttribute('data-view'))!) as { zoom: number };
      for (let i = 0; i < 10; i++) await page.keyboard.press('Shift+ArrowRight');
      await page.keyboard.press('Enter');
      await expect.poll(async () => (await added()).length).toBe(2);
      const [first, second] = await added();
      expect(Math.hypot(second!.x - first!.x, second!.y - first!.y)).toBeCloseTo(60 / zoom, 1);

      // The new pin is selected: Delete takes it off, and the sheet saves without it.
      await page.keyboard.press('Delete');
      await expect.poll(async () => (await added()).length).toBe(1);
      await screenshot(page, 'a11y-keyboard-pin');
      // Back to the first, which Enter selects, and off with it too.
      for (let i = 0; i < 10; i++) await page.keyboard.press('Shift+ArrowLeft');
      await page.keyboard.press('Enter');
      await page.keyboard.press('Delete');
      await expect.poll(async () => (await added()).length).toBe(0);

      // The mouse takes over: the crosshair goes.
      await canvas.click({ position: { x: 10, y: 10 }, button: 'right' });
      expect(await crosshair.count()).toBe(0);
      await page.close();
    },
  );
});

describe('controls the library draws for the mouse, from the keyboard', () => {
  it(
    'the password eye shows the password; a sortable heading sorts; the sheet side tabs follow the arrow keys',
    { timeout: 90_000 },
    async () => {
      const signIn = await open(pages.find((p) => p.name === 'sign-in')!);
      await signIn.locator('#sign-in-password').fill('hunter2 is no password');
      await signIn.locator('#sign-in-password').press('Tab');
      const eye = signIn.getByRole('button', { name: 'Show password' });
      expect(await eye.evaluate((el) => el === document.activeElement)).toBe(true);
      expect(await eye.getAttribute('aria-pressed')).toBe('false');
      await signIn.keyboard.press('Enter');
      expect(await signIn.locator('#sign-in-password').getAttribute('type')).toBe('text');
      await expect.poll(() => eye.getAttribute('aria-pressed')).toBe('true');
      await signIn.close();

      const model = await open(pages.find((p) => p.name === 'dimensions & relations')!);
      const heading = model.getByRole('columnheader', { name: /^Name/ });
      expect(await heading.getAttribute('aria-sort')).toBe('none');
      await heading.focus();
      await model.keyboard.press('Enter');
      await expect.poll(() => heading.getAttribute('aria-sort')).not.toBe('none');
      await model.close();

      const sheet = await open(pages.find((p) => p.name === 'a sheet')!);
      const tabs = sheet.getByRole('tab');
      const names = await tabs.allInnerTexts();
      const selected = sheet.getByRole('tab', { selected: true });
      const before = names.indexOf(await selected.innerText());
      await selected.focus();
      await sheet.keyboard.press('ArrowRight');
      const after = (before + 1) % names.length;
      await expect.poll(() => selected.innerText()).toBe(names[after]);
      expect(await selected.evaluate((el) => el === document.activeElement)).toBe(true);
      const panel = sheet.getByRole('tabpanel');
      expect(await panel.getAttribute('aria-labelledby')).toBe(await selected.getAttribute('id'));
      await sheet.keyboard.press('Home');
      await expect.poll(() => selected.innerText()).toBe(names[0]);
      await sheet.close();
    },
  );
});
