import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import type { AxeResults, Result } from 'axe-core';
import type { Page } from 'playwright-core';

const axeSource = readFileSync(
  createRequire(import.meta.url).resolve('axe-core/axe.min.js'),
  'utf8',
);

/** WCAG 2.0 and 2.1, levels A and AA. */
export const wcagTags = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'];

/**
 * Loads axe-core into the page. The app's Content-Security-Policy allows scripts from its own
 * origin only, so a <script> element (what addScriptTag makes) is refused; code evaluated
 * through the DevTools protocol is not subject to the page's policy.
 */
export async function injectAxe(page: Page) {
  if (await page.evaluate(() => 'axe' in window)) return;
  await page.evaluate(axeSource);
}

/** The WCAG 2 A/AA violations of the page, or of the part matched by `within`. */
export async function axeViolations(page: Page, within?: string): Promise<Result[]> {
  await injectAxe(page);
  const results = await page.evaluate(
    ({ within, tags }) => {
      const axe = (window as unknown as { axe: typeof import('axe-core') }).axe;
      return axe.run(within ? { include: [within] } : document, {
        runOnly: { type: 'tag', values: tags },
        resultTypes: ['violations'],
      }) as Promise<AxeResults>;
    },
    { within, tags: wcagTags },
  );
  return results.violations;
}

export const seriousOnly = (violations: Result[]) =>
  violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');

/** One block per rule: impact, rule, what it asks, then each offending element and why. */
export function describeViolations(violations: Result[]): string {
  return violations
    .map((v) =>
      [
        `${v.impact} · ${v.id}: ${v.help} (${v.helpUrl})`,
        ...v.nodes.map(
          (n) =>
            `  ${n.target.join(' ')}\n    ${n.html.slice(0, 160)}\n    ${(n.failureSummary ?? '').replace(/\n/g, '\n    ')}`,
        ),
      ].join('\n'),
    )
    .join('\n\n');
}

export interface Control {
  id: number;
  /** A short description for messages: tag, role, classes and text. */
  label: string;
  /** Radios of one group are one tab stop: the group's name, or '' for other controls. */
  group: string;
}

export interface TabStop {
  /** The listed controls this stop counts for: the focused one, its wrappers or its inner input. */
  ids: number[];
  label: string;
  /** The accessible name axe computes, without a placeholder standing in for a label. */
  name: string;
}

export interface TabWalk {
  controls: Control[];
  stops: TabStop[];
  presses: number;
}

const describe = (el: Element) => {
  const role = el.getAttribute('role');
  const text = (el as HTMLElement).innerText?.replace(/\s+/g, ' ').trim().slice(0, 40) ?? '';
  return `<${el.tagName.toLowerCase()}${role ? ` role=${role}` : ''} class="${el.getAttribute('class') ?? ''}"> “${text}”`;
};

/**
 * Lists the visible, enabled controls inside `within` (anything focusable by nature or role, and
 * anything with a hand cursor), then presses Tab until focus comes back round to the first stop
 * it met (or `maxPresses`), and names each stop.
 */
export async function walkByTab(page: Page, within = 'body', maxPresses = 400): Promise<TabWalk> {
  await injectAxe(page);
  await page.evaluate(`window.a11yDescribe = ${describe.toString()}`);
  const controls = await page.evaluate((within) => {
    const describe = (window as unknown as { a11yDescribe: (el: Element) => string }).a11yDescribe;
    const scope = document.querySelector(within)!;
    const selector = [
      'a[href]',
      'button',
      'input:not([type=hidden])',
      'select',
      'textarea',
      'summary',
      '[tabindex]:not([tabindex="-1"])',
      '[contenteditable="true"]',
      ...['button', 'link', 'tab', 'checkbox', 'radio', 'switch', 'combobox', 'slider'].map(
        (r) => `[role=${r}]`,
      ),
    ].join(',');
    const pointer = (el: Element | null) => !!el && getComputedStyle(el).cursor === 'pointer';
    // Whatever looks clickable counts as a control too: the outermost element with a hand cursor.
    const clickable = [...scope.querySelectorAll('*')].filter(
      (el) => pointer(el) && !pointer(el.parentElement),
    );
    const candidates = new Set([...scope.querySelectorAll(selector), ...clickable]);
    const found = [...candidates].filter((el): el is HTMLElement => {
      if (!(el instanceof HTMLElement)) return false;
      if (el.matches(':disabled') || el.getAttribute('aria-disabled') === 'true') return false;
      if (el.closest('[aria-hidden="true"], [inert]')) return false;
      // Taken out of the tab order on purpose, as a dialog's close cross is (Escape does it).
      if (el.getAttribute('tabindex') === '-1') return false;
      // A field's clear cross, drawn by the library for the mouse: a text field clears by deleting
      // its text; a select has no keyboard way to clear yet (a known gap, not hidden here by
      // accident).
      if (el.matches('.n-base-clear__clear')) return false;
      // A radio or check box drawn by the library hides its input under the drawn mark.
      const shown = el.matches('input[type=radio], input[type=checkbox]')
        ? (el.closest('label') ?? el.parentElement!)
        : el;
      const box = shown.getBoundingClientRect();
      return shown.checkVisibility({ visibilityProperty: true }) && box.width > 0 && box.height > 0;
    });
    return found.map((el, id) => {
      el.dataset.a11yControl = String(id);
      // A group of radios is one tab stop; arrow keys move within it.
      const radio = el.matches('input[type=radio]')
        ? (el as HTMLInputElement)
        : el.querySelector<HTMLInputElement>('input[type=radio]');
      return {
        id,
        label: describe(el),
        group: radio ? `radio:${radio.name}` : '',
      };
    });
  }, within);

  // Each Tab's keydown records where focus rested after the press before it, so the walk costs
  // one round trip a press; it is read back every few presses to see whether it came round.
  await page.evaluate(() => {
    const w = window as unknown as { a11yKeys: string[] };
    w.a11yKeys = [];
    (document.activeElement as HTMLElement | null)?.blur();
    document.addEventListener(
      'keydown',
      (e) => {
        const el = document.activeElement as HTMLElement | null;
        if (e.key !== 'Tab' || !el || el === document.body) return;
        el.dataset.a11yStop ??= String(w.a11yKeys.length);
        w.a11yKeys.push(el.dataset.a11yStop);
      },
      true,
    );
  });
  const keys: string[] = [];
  let presses = 0;
  while (presses < maxPresses) {
    for (let i = 0; i < 16; i += 1) await page.keyboard.press('Tab');
    presses += 16;
    const seen = await page.evaluate(() => (window as unknown as { a11yKeys: string[] }).a11yKeys);
    const round = seen.indexOf(seen[0]!, 1);
    keys.splice(0, keys.length, ...(round > 0 ? seen.slice(0, round) : seen));
    if (round > 0) break;
  }
  const unique = [...new Set(keys)];

  const stops = await page.evaluate((keys) => {
    const axe = (window as unknown as { axe: typeof import('axe-core') }).axe;
    const describe = (window as unknown as { a11yDescribe: (el: Element) => string }).a11yDescribe;
    axe.setup(document);
    const found = keys.flatMap((key) => {
      const el = document.querySelector<HTMLElement>(`[data-a11y-stop="${key}"]`);
      if (!el) return [];
      // Focus may land on a control's own input (a select's search box), on its wrapper, or on
      // an input inside a clickable label: each of those counts as reaching the control.
      const hits = [...el.querySelectorAll<HTMLElement>('[data-a11y-control]')];
      for (let n = el.closest<HTMLElement>('[data-a11y-control]'); n;) {
        hits.push(n);
        n = n.parentElement?.closest<HTMLElement>('[data-a11y-control]') ?? null;
      }
      const name = axe.commons.text.accessibleText(el).trim();
      const placeholder = el.getAttribute('placeholder') ?? '';
      return [
        {
          ids: hits.map((n) => Number(n.dataset.a11yControl)),
          label: describe(el),
          name: placeholder && name === placeholder ? '' : name,
        },
      ];
    });
    axe.teardown();
    return found;
  }, unique);
  return { controls, stops, presses };
}

/** What a tab walk found wrong: controls never focused (a radio group counts once), stops that
 * belong to no listed control, and stops without a name. */
export function walkProblems(walk: TabWalk): string[] {
  const reached = new Set(walk.stops.flatMap((s) => s.ids));
  const reachedGroups = new Set(
    walk.controls.filter((c) => c.group && reached.has(c.id)).map((c) => c.group),
  );
  const missed = walk.controls.filter(
    (c) => !reached.has(c.id) && !(c.group && reachedGroups.has(c.group)),
  );
  return [
    ...missed.map((c) => `not reached by Tab: ${c.label}`),
    ...walk.stops.filter((s) => !s.ids.length).map((s) => `focus stop on no control: ${s.label}`),
    ...walk.stops.filter((s) => !s.name).map((s) => `no accessible name: ${s.label}`),
  ];
}
