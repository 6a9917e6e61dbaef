/**
 * The served dashboard in headless Debian Chromium: the gateway (real, against the test database)
 * serves the built app; the navigation lists every page, the self-hosted fonts load, and every
 * icon is drawn as a glyph (a ligature left as text would overflow the 24 px icon box).
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Browser, Page } from 'playwright-core';
import { launchBrowser, artifactPath } from '../support/browser.js';
import { startTestGateway } from '../support/gateway.js';
import type { RunningGateway } from '../../gateway/server.js';

const PAGES = ['Overview', 'Keys', 'Probe', 'Usage', 'Jobs', 'Mixtures', 'Team', 'Plan & billing', 'Docs', 'Operator'];

let gateway: RunningGateway;
let browser: Browser;
let page: Page;
const outsideRequests: string[] = [];
const consoleErrors: string[] = [];

before(async () => {
  gateway = await startTestGateway();
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
  page.on('request', (r) => {
    if (!r.url().startsWith(gateway.url) && !r.url().startsWith('data:')) outsideRequests.push(r.url());
  });
  page.on('console', (m) => {
    if (m.type() === 'error') consoleErrors.push(m.text());
  });
});

after(async () => {
  await browser?.close();
  await gateway?.close();
});

test('the dashboard shell shows the navigation with fonts and icons rendered', async () => {
  await page.goto(`${gateway.url}/`, { waitUntil: 'networkidle' });
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
});

test('navigating and deep links work through the gateway', async () => {
  await page.getByRole('link', { name: 'Keys' }).click();
  await page.waitForURL(/\/keys$/);
  assert.match(await page.locator('main h1, h1').first().innerText(), /Keys/);
  await page.goto(`${gateway.url}/mixtures`, { waitUntil: 'networkidle' });
  assert.match(await page.title(), /Mixtures/);
  await page.screenshot({ path: artifactPath('shell-mixtures.png') });
});
