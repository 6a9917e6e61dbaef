/**
 * The served dashboard in headless Debian Chromium: the gateway (real, against the test database
 * with the demo seed) serves the built app; signed out it shows the sign-in page, signed in as the
 * demo owner the navigation lists every page an owner sees (Operator is for operators only), the
 * self-hosted fonts load, and every icon is drawn as a glyph (a ligature left as text would
 * overflow the 24 px icon box).
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, artifactPath } from '../support/browser.js';
import { startTestGateway } from '../support/gateway.js';
import { DEMO_USERS } from '../../seeds/demo-accounts.js';
import type { RunningGateway } from '../../gateway/server.js';

const PAGES = ['Overview', 'Keys', 'Probe', 'Usage', 'Jobs', 'Mixtures', 'Team', 'Plan & billing', 'Docs'];
const owner = DEMO_USERS.find((u) => u.role === 'owner')!;

let gateway: RunningGateway;
let browser: Browser;
let page: Page;
const outsideRequests: string[] = [];
const consoleErrors: string[] = [];
const unauthorized: string[] = [];

before(async () => {
  gateway = await startTestGateway();
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
  page.on('request', (r) => {
    if (!r.url().startsWith(gateway.url) && !r.url().startsWith('data:')) outsideRequests.push(r.url());
  });
  page.on('console', (m) => {
    // Chromium logs every 401 as a console error; which 401s happened is checked on its own below
    if (m.type() === 'error' && !/status of 401/.test(m.text())) consoleErrors.push(m.text());
  });
  page.on('response', (r) => {
    if (r.status() === 401) unauthorized.push(new URL(r.url()).pathname);
  });
});

after(async () => {
  await browser?.close();
  await gateway?.close();
});

test('the dashboard shell shows the navigation with fonts and icons rendered', async () => {
  await page.goto(`${gateway.url}/`, { waitUntil: 'networkidle' });
  await page.waitForURL(/\/sign-in/);
  await page.getByLabel('E-mail').fill(owner.email);
  await page.getByLabel('Password').fill(owner.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForSelector('mat-sidenav a.fw-nav-entry');
  const labels = (await page.locator('mat-sidenav a.fw-nav-entry').allInnerTexts()).map((t) => t.split('\n').pop()!.trim());
  assert.deepEqual(labels, PAGES);

  await page.evaluate(() => document.fonts.ready);
  const fonts = await page.evaluate(() => ({
    symbols: document.fonts.check('24px "Material Symbols Outlined"'),
    roboto: document.fonts.check('16px Roboto'),
    loaded: [...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/"/g, '')),
  }));
  assert.ok(fonts.loaded.includes('Material Symbols Outlined'), `Material Symbols loaded: ${fonts.loaded.join(', ')}`);
  assert.ok(fonts.loaded.includes('Roboto'), `Roboto loaded: ${fonts.loaded.join(', ')}`);

  const icons = await page.locator('mat-icon').evaluateAll((els) =>
    els.map((el) => ({ text: el.textContent?.trim(), scrollWidth: (el as HTMLElement).scrollWidth, font: getComputedStyle(el).fontFamily })),
  );
  assert.ok(icons.length >= PAGES.length);
  for (const icon of icons) {
    assert.match(icon.font, /Material Symbols Outlined/, `icon "${icon.text}" uses the symbols font`);
    assert.ok(icon.scrollWidth <= 32, `icon "${icon.text}" is drawn as a glyph (content width ${icon.scrollWidth}px)`);
  }

  await page.screenshot({ path: artifactPath('shell-overview.png') });
  assert.deepEqual(outsideRequests, [], 'nothing is fetched from outside the gateway');
  assert.deepEqual(consoleErrors, [], 'no console errors (e.g. CSP violations)');
  // signed out, restoring the session from a refresh cookie that is not there is the only refusal
  assert.deepEqual([...new Set(unauthorized)], ['/v1/auth/session/refresh'], 'the only 401 is the signed-out session restore');
});

test('navigating and deep links work through the gateway', async () => {
  await page.getByRole('link', { name: 'Keys' }).click();
  await page.waitForURL(/\/keys$/);
  assert.match(await page.locator('main h1, h1').first().innerText(), /Keys/);
  await page.goto(`${gateway.url}/mixtures`, { waitUntil: 'networkidle' });
  assert.match(await page.title(), /Mixtures/);
  await page.screenshot({ path: artifactPath('shell-mixtures.png') });
});
