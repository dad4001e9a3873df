import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoBuilder, demoChecker, demoPassword, demoProjectName } from '../../server/demo/seed';
import { TestClient, waitForMail } from '../helpers/app';
import { screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';
import { readPdf } from '../helpers/pdf-text';

/**
 * The words a builder reads (issue 16): every page and dialog of the demo and of a new empty
 * project, the shop sheet PDF and CSV, and the invitation and mention mails, read as a person
 * would (visible text and every placeholder), hold none of our leftovers and none of the names
 * that are not ours.
 */
const forbidden: [string, RegExp][] = [
  ['the library default placeholder', /Please (Input|Select)/i],
  ['a reference-file tag', /check-values/i],
  ['a memory tag', /\[from memory\]/i],
  ['a published tag', /\[published\]/i],
  ['an internal drill-set name', /numberLetter/],
  ['a raw identifier', /\b[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\b/i],
  ['a developer timing', /\b\d+(?:\.\d+)?\s?ms\b/],
  ['"redundant"', /redundant/i],
  ['"more dimension"', /more dimensions?/i],
];

/** Each forbidden thing found in `text`, with a little of what is around it. */
function findings(text: string): string[] {
  // Links are for the browser, not for reading: an id inside a URL is where it belongs.
  const readable = text.replace(/https?:\/\/\S+/g, '<link>');
  const found: string[] = [];
  for (const [what, pattern] of forbidden) {
    const m = new RegExp(
      pattern.source,
      pattern.flags.includes('g') ? pattern.flags : `${pattern.flags}g`,
    );
    for (const hit of readable.matchAll(m)) {
      const at = hit.index ?? 0;
      found.push(`${what}: “…${readable.slice(Math.max(0, at - 40), at + hit[0].length + 40)}…”`);
    }
  }
  return found;
}

let rig: BrowserRig;
let guest: BrowserContext;
let builder: BrowserContext;
const ids = { project: '', sheet: '', pin: '', part: '', empty: '', invitation: '', reset: '' };
let mentionLink = '';

beforeAll(async () => {
  rig = await startBrowserRig();
  const api = new TestClient(rig.t.app);
  await api.login(demoBuilder.email, demoPassword);
  const { projects } = (await api.get('/api/projects').expect(200)).body as {
    projects: { id: string; name: string }[];
  };
  ids.project = projects.find((p) => p.name === demoProjectName)!.id;
  const { sheets } = (await api.get(`/api/projects/${ids.project}/sheets`).expect(200)).body as {
    sheets: { id: string; pins: { id: string; label: string }[] }[];
  };
  const pinned = sheets.find((s) => s.pins.some((p) => p.label))!;
  ids.sheet = pinned.id;
  const pin = pinned.pins.find((p) => p.label)!;
  ids.pin = pin.id;
  const model = (await api.get(`/api/projects/${ids.project}/model`).expect(200)).body as {
    model: { parts: { id: string }[] };
  };
  ids.part = model.model.parts[0]!.id;
  ids.empty = (
    (await api.post('/api/projects', { name: 'Empty bench', displayUnit: 'in' }).expect(201))
      .body as { id: string }
  ).id;
  await api
    .post(`/api/projects/${ids.project}/invitations`, {
      email: 'wording.mentor@example.com',
      role: 'checker',
    })
    .expect(201);
  ids.invitation = (await waitForMail(rig.t, 'wording.mentor@example.com')).body.match(
    /\/invitations\/([\w-]+)/,
  )![1]!;
  // A mention on a pin: the mail must say where in words and link to the pin itself.
  await api
    .post(`/api/projects/${ids.project}/comments`, {
      targetKind: 'pin',
      targetId: `${ids.sheet}:${ids.pin}`,
      body: `@${demoChecker.email} is this pin on the right line?`,
    })
    .expect(201);
  const mention = await waitForMail(rig.t, demoChecker.email, 5000, /right line/);
  expect(mention.body).toContain(`the pin “${pin.label}” on the sheet “`);
  mentionLink = mention.body.match(/https?:\/\/\S+/)![0];
  expect(mentionLink).toContain(`/sheets/${ids.sheet}?pin=${encodeURIComponent(ids.pin)}`);

  guest = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
  guest.setDefaultTimeout(15_000);
  builder = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
  builder.setDefaultTimeout(15_000);
  const page = await builder.newPage();
  await page.goto(`${rig.baseUrl}/sign-in`);
  await page.locator('#sign-in-email').fill(demoBuilder.email);
  await page.locator('#sign-in-password').fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/projects$/);
  await page.close();
}, 240_000);

afterAll(async () => {
  await guest?.close();
  await builder?.close();
  await rig?.close();
});

/** What a person reads on the page: the visible text and every placeholder. */
async function readable(page: Page): Promise<string> {
  return page.evaluate(() => {
    const placeholders = [...document.querySelectorAll('[placeholder]')].map(
      (e) => `placeholder: ${e.getAttribute('placeholder')}`,
    );
    return [document.body.innerText, ...placeholders].join('\n');
  });
}

/** Clicks the named button and waits for its dialog to finish opening. */
const modal = (button: string) => async (page: Page) => {
  await page.getByRole('button', { name: button, exact: true }).first().click();
  await page.locator('[role=dialog]').last().waitFor();
  await page.waitForFunction(() =>
    document
      .getAnimations()
      .every(
        (a) => a.playState !== 'running' || a.effect?.getComputedTiming().endTime === Infinity,
      ),
  );
};

interface Visit {
  name: string;
  signedIn: boolean;
  path: () => string;
  /** On the page once its data has loaded. */
  ready: string;
  dialogs?: { name: string; open: (page: Page) => Promise<void> }[];
}

const demo = () => `/projects/${ids.project}`;
const empty = () => `/projects/${ids.empty}`;
const visits: Visit[] = [
  { name: 'sign-in', signedIn: false, path: () => '/sign-in', ready: '#sign-in-email' },
  { name: 'register', signedIn: false, path: () => '/register', ready: '#register-email' },
  { name: 'password reset', signedIn: false, path: () => '/reset-password', ready: '#reset-email' },
  {
    name: 'invitation',
    signedIn: false,
    path: () => `/invitations/${ids.invitation}`,
    ready: '[data-testid=invitation-preview]',
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
    name: 'demo overview',
    signedIn: true,
    path: demo,
    ready: '[data-testid=check-tally]',
    dialogs: [{ name: 'project details', open: modal('Edit details') }],
  },
  {
    name: 'demo dimensions',
    signedIn: true,
    path: () => `${demo()}/model`,
    ready: '[data-dimension="horn2_x"]',
    dialogs: [
      {
        name: 'a selected dimension',
        open: async (page) => {
          await page.locator('[data-dimension="horn2_bolt_aft_x"]').click();
          await page.getByTestId('stackup-chart').waitFor();
        },
      },
      {
        name: 'fix the suspect',
        open: modal('Trust the others: fix this one'),
      },
    ],
  },
  {
    name: 'demo sheets',
    signedIn: true,
    path: () => `${demo()}/sheets`,
    ready: '[data-testid=sheet-list] a',
  },
  {
    name: 'demo sheet',
    signedIn: true,
    path: () => `${demo()}/sheets/${ids.sheet}`,
    ready: '[data-testid=first-view]',
  },
  {
    name: 'demo parts',
    signedIn: true,
    path: () => `${demo()}/parts`,
    ready: '[data-testid=feature-table]',
    dialogs: [
      { name: 'part form', open: modal('Edit part') },
      { name: 'feature form', open: modal('Add feature') },
      { name: 'new part form', open: modal('Add part') },
    ],
  },
  {
    name: 'demo part',
    signedIn: true,
    path: () => `${demo()}/parts/${ids.part}`,
    ready: '[data-testid=part-view]',
  },
  {
    name: 'demo shop sheet',
    signedIn: true,
    path: () => `${demo()}/shop-sheet/print`,
    ready: '.saved-note',
  },
  { name: 'demo history', signedIn: true, path: () => `${demo()}/history`, ready: '.history ol' },
  {
    name: 'demo activity',
    signedIn: true,
    path: () => `${demo()}/activity`,
    ready: '[data-testid=activity-entry]',
    dialogs: [{ name: 'correction', open: modal('Record a correction…') }],
  },
  { name: 'demo team', signedIn: true, path: () => `${demo()}/team`, ready: '#invite-email' },
  {
    name: 'empty overview',
    signedIn: true,
    path: empty,
    ready: '[data-testid=where-to-start]',
    dialogs: [{ name: 'project details', open: modal('Edit details') }],
  },
  {
    name: 'empty dimensions',
    signedIn: true,
    path: () => `${empty()}/model`,
    ready: '[data-testid=status-strip]',
  },
  {
    name: 'empty sheets',
    signedIn: true,
    path: () => `${empty()}/sheets`,
    ready: '[data-testid=sheet-drop]',
  },
  {
    name: 'empty parts',
    signedIn: true,
    path: () => `${empty()}/parts`,
    ready: 'text=Add part',
    dialogs: [{ name: 'new part form', open: modal('Add part') }],
  },
  {
    name: 'empty shop sheet',
    signedIn: true,
    path: () => `${empty()}/shop-sheet/print`,
    ready: 'h1',
  },
  {
    name: 'empty history',
    signedIn: true,
    path: () => `${empty()}/history`,
    ready: '.history .n-empty, .history ol',
  },
  {
    name: 'empty activity',
    signedIn: true,
    path: () => `${empty()}/activity`,
    ready: '[data-testid=activity-filter]',
  },
  { name: 'empty team', signedIn: true, path: () => `${empty()}/team`, ready: '#invite-email' },
];

const slug = (name: string) => name.replace(/[^a-z]+/g, '-').replace(/-$/, '');

describe('the words a builder reads (issue 16)', () => {
  for (const v of visits) {
    it(
      `${v.name}: no leftovers and no borrowed names on the page or its dialogs`,
      { timeout: 120_000 },
      async () => {
        const page = await (v.signedIn ? builder : guest).newPage();
        await page.goto(`${rig.baseUrl}${v.path()}`);
        await page.locator(v.ready).first().waitFor({ state: 'attached' });
        await page.waitForLoadState('networkidle');
        expect.soft(findings(await readable(page)), v.name).toEqual([]);
        await screenshot(page, `wording/${slug(v.name)}`);
        for (const d of v.dialogs ?? []) {
          await page.reload();
          await page.locator(v.ready).first().waitFor({ state: 'attached' });
          await page.waitForLoadState('networkidle');
          await d.open(page);
          expect.soft(findings(await readable(page)), `${v.name}, ${d.name}`).toEqual([]);
          await screenshot(page, `wording/${slug(v.name)}-${slug(d.name)}`);
        }
        await page.close();
      },
    );
  }

  it(
    'the link of a mention mail opens the pin, its comments showing, in plain words',
    { timeout: 60_000 },
    async () => {
      const page = await builder.newPage();
      await page.goto(mentionLink);
      await page.getByText('is this pin on the right line?').waitFor();
      expect.soft(findings(await readable(page)), 'mention link').toEqual([]);
      await screenshot(page, 'wording/mention-link');
      await page.close();
    },
  );

  it('a new empty form shows no red before anything is typed', { timeout: 60_000 }, async () => {
    const page = await builder.newPage();
    await page.goto(`${rig.baseUrl}${empty()}/parts`);
    await page.getByText('Add part').first().waitFor();
    await modal('Add part')(page);
    expect(await page.locator('[role=dialog] .n-form-item-feedback--error').count()).toBe(0);
    await page.close();
  });

  it(
    'the shop sheet PDF and CSV, and the invitation and mention mails, read clean',
    { timeout: 120_000 },
    async () => {
      const pdf = await builder.request.get(
        `${rig.baseUrl}/api/projects/${ids.project}/shop-sheet.pdf`,
      );
      expect(pdf.status()).toBe(200);
      const { text } = await readPdf(Buffer.from(await pdf.body()));
      // The demo's recorded correction names its sheet by title (it printed the sheet's id).
      expect(text).toMatch(/applied to the source sheets/);
      expect.soft(findings(text), 'shop sheet PDF').toEqual([]);
      const csv = await builder.request.get(
        `${rig.baseUrl}/api/projects/${ids.project}/shop-sheet.csv`,
      );
      expect(csv.status()).toBe(200);
      expect.soft(findings(await csv.text()), 'shop sheet CSV').toEqual([]);
      const mails = rig.t.mail().filter((m) => /wording\.mentor@|checker@example\.com/i.test(m.to));
      expect(mails.length).toBeGreaterThanOrEqual(2);
      for (const m of mails) {
        expect.soft(findings(`${m.subject}\n${m.body}`), `mail “${m.subject}”`).toEqual([]);
      }
    },
  );
});
