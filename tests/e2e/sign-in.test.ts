import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoBuilder, demoPassword, demoProjectName } from '../../server/demo/seed';
import { mailedLink } from '../helpers/app';
import { screenshot, startBrowserRig, type BrowserRig } from '../helpers/browser';

let rig: BrowserRig;
beforeAll(async () => {
  rig = await startBrowserRig();
});
afterAll(() => rig?.close());

describe('signing in, in a real browser', () => {
  it('the demo builder signs in and sees the demo project, then opens it', async () => {
    const context = await rig.browser.newContext({ viewport: { width: 1280, height: 800 } });
    context.setDefaultTimeout(8000);
    const page = await context.newPage();
    await page.goto(`${rig.baseUrl}/projects`);
    // Signed out, the guard sends us to the sign-in page.
    await page.waitForURL(/\/sign-in/);
    await page.locator('#sign-in-email').fill(demoBuilder.email);
    await page.locator('#sign-in-password').fill('not the password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toMatch(/do not match/);
    await screenshot(page, 'sign-in-refused');

    await page.locator('#sign-in-password').fill(demoPassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects$/);
    const card = page.getByRole('link', { name: new RegExp(demoProjectName.slice(0, 20)) });
    await card.waitFor();
    expect(await card.textContent()).toContain('owner');
    // The bundled font is in use (no CDN): the document has loaded IBM Plex Sans.
    const fontLoaded = await page.evaluate(async () => {
      await document.fonts.ready;
      return [...document.fonts].some(
        (f) => f.family.includes('IBM Plex Sans') && f.status === 'loaded',
      );
    });
    expect(fontLoaded).toBe(true);
    await screenshot(page, 'projects');

    await card.click();
    await page.getByRole('heading', { name: demoProjectName }).waitFor();
    expect(await page.getByText('checker@example.com').count()).toBe(1);
    await screenshot(page, 'project-overview');
    await context.close();
  });

  it('a new builder registers, opens the mailed link, is signed in, and creates a project', async () => {
    const context = await rig.browser.newContext({
      viewport: { width: 1024, height: 768 },
      hasTouch: true,
    });
    context.setDefaultTimeout(8000);
    const page = await context.newPage();
    await page.goto(`${rig.baseUrl}/register`);
    await page.locator('#register-name').fill('Sam Turner');
    await page.locator('#register-email').fill('sam@example.com');
    await page.locator('#register-password').fill('short');
    await page.getByRole('button', { name: 'Create account' }).click();
    await screenshot(page, 'register-refused');
    await page.getByText('Use at least 10 characters').first().waitFor({ timeout: 5000 });
    // The typed values survive the refusal.
    expect(await page.locator('#register-email').inputValue()).toBe('sam@example.com');
    await page.locator('#register-password').fill('a long enough password');
    await page.getByRole('button', { name: 'Create account' }).click();
    // The same answer whether or not the address has an account: check the mail.
    await page.getByTestId('register-mailed').waitFor();
    expect(await page.getByTestId('register-mailed').innerText()).toMatch(/Check your mail/);
    const link = await mailedLink(rig.t, 'sam@example.com', `${rig.baseUrl}/confirm-email?token=`);
    await page.goto(link);
    await page.getByTestId('confirm-email').click();
    await page.waitForURL(/\/projects$/);
    await page.getByRole('button', { name: 'New project' }).click();
    await page.locator('#project-name').fill('Traction engine, hind axle');
    await page.getByRole('button', { name: 'Create project' }).click();
    await page.getByRole('heading', { name: 'Traction engine, hind axle' }).waitFor();
    await screenshot(page, 'new-project');
    await context.close();
  });
});
