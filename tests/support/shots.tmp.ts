import { launch, signInAs } from './browser';
const base = 'http://127.0.0.1:4321';
const [email, ...paths] = process.argv.slice(2);
const b = await launch();
const page = await b.newPage({ viewport: { width: 1400, height: 900 } });
page.on('console', (m) => { if (m.type() === 'error') console.log('console error:', m.text()); });
process.env.HEIGHTLIGHT_APP_URL = base;
await page.goto(`${base}/signin`);
await page.getByLabel('E-mail').fill(email);
await page.getByLabel('Password').fill('vesicle-demo-2026');
await page.getByRole('button', { name: 'Sign in' }).click();
await page.waitForURL((u) => !u.pathname.startsWith('/signin'));
for (const [i, p] of paths.entries()) {
  let url = p;
  if (p.startsWith('@field')) {
    await page.goto(`${base}/`);
    await page.locator('a[href^="/studies/"]').first().click();
    const href = await page.locator('a[href^="/fields/"]').first().getAttribute('href');
    url = href! + p.slice(6);
  }
  await page.goto(base + url);
  await page.waitForTimeout(2500);
  await page.screenshot({ path: `/tmp/hl/shots/${i}-${url.replace(/\W+/g, '_')}.png`, fullPage: true });
  console.log('shot', url);
}
await b.close();
