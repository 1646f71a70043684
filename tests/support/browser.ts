/** Debian's Chromium driven by playwright-core (browser downloads fail on our machines). */
import { chromium, type Browser, type Page } from 'playwright-core';
import { mkdirSync } from 'node:fs';
import { APP_URL } from './client';

export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });
}

/** Waits until every React island on the page is hydrated (Astro drops the `ssr` attribute then). */
export async function islandsReady(page: Page) {
  await page.waitForFunction(() => !document.querySelector('astro-island[ssr]'), undefined, { timeout: 30_000 });
}

/**
 * Waits until the island holding `testId` is hydrated. For `client:visible` islands on long pages,
 * where islands below the fold stay unhydrated until scrolled to.
 */
export async function islandReady(page: Page, testId: string) {
  await page.getByTestId(testId).scrollIntoViewIfNeeded();
  await page.waitForFunction((id) => {
    const el = document.querySelector(`[data-testid="${id}"]`);
    return !!el && !el.closest('astro-island[ssr]');
  }, testId, { timeout: 30_000 });
}

/** Signs in through the real sign-in form. */
export async function signInAs(page: Page, email: string, password: string) {
  await page.goto(`${APP_URL}/signin`);
  await islandsReady(page);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/signin'), { timeout: 20_000 });
}

export async function screenshot(page: Page, name: string) {
  const dir = `${process.env.HEIGHTLIGHT_DATA_DIR ?? '.test-data'}/screenshots`;
  mkdirSync(dir, { recursive: true });
  await page.screenshot({ path: `${dir}/${name}.png`, fullPage: true });
}
