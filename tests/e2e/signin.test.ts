import { describe, expect } from 'vitest';
import { signInAs, screenshot, islandsReady } from '../support/browser';
import { APP_URL } from '../support/client';
import { DEMO, DEMO_PASSWORD } from '../support/demo';
import { test, it } from '../support/fixtures';

const NAV = {
  admin: ['Studies', 'People', 'Audit log', 'Outbox'],
  biologist: ['Studies', 'Upload fields'],
  analyst: ['Studies', 'Analysis queue'],
  collaborator: ['Studies', 'Released results'],
} as const;

describe('sign-in in Chromium', () => {
  for (const role of Object.keys(NAV) as (keyof typeof NAV)[]) {
    it(`${role} signs in through the form and sees only their navigation`, async ({ page }) => {
      const errors: string[] = [];
      page.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
      await signInAs(page, DEMO[role], DEMO_PASSWORD);
      const links = await page.getByRole('navigation', { name: 'Main' }).getByRole('listitem').allTextContents();
      expect(links.map((l) => l.trim())).toEqual(NAV[role]);
      await expect(page.getByTestId('whoami').textContent()).resolves.toBeTruthy();
      await screenshot(page, `home-${role}`);
      expect(errors).toEqual([]);
    });
  }

  it('shows a clear message for a wrong password and stays on the sign-in page', async ({ page }) => {
    await page.goto(`${APP_URL}/signin`);
    await islandsReady(page);
    // without JavaScript the form must not put the password into the address (a GET)
    expect(await page.locator('form[aria-label="Sign in"]').getAttribute('method')).toBe('post');
    await page.getByLabel('E-mail').fill(DEMO.analyst);
    await page.getByLabel('Password').fill('not-the-password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect(page.getByRole('alert').textContent()).resolves.toContain('do not match');
    expect(new URL(page.url()).pathname).toBe('/signin');
    await screenshot(page, 'signin-error');
  });
});
