/**
 * Journey 4 (DESIGN.md §1) in headless Chromium against a real gateway, the test database, the
 * payments fake and the mail catcher: the owner of an organisation on Free — whose code has just
 * had a batch of 10 001 points refused (Free's largest batch is 10 000, DESIGN.md §6) — signs in,
 * opens Plan & billing, compares the plans, tries a declined test card (told why, nothing saved),
 * saves a good one, upgrades to Group after a confirmation that says what is charged and when,
 * sees the invoice, and the same batch is now accepted. The receipt reaches the mail catcher.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { artifactPath, launchBrowser } from '../support/browser.js';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { waitForMail } from '../support/mail.js';
import { fakeClientIp, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { evaluateBatch } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import { KeyService } from '../../gateway/keys/service.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let db: Knex;
let keyService: KeyService;
let browser: Browser;
let context: BrowserContext;
let page: Page;
let owner: TestUser;
let token: string;
const consoleErrors: string[] = [];
const outsideRequests: string[] = [];

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
  keyService = new KeyService(db);
  owner = await makeUser(db, 'journey-plan-owner');
  const org = await makeOrganisation(db, [[owner, 'owner']], 'deflagration');
  token = (await keyService.create({ organisationId: org.id, name: 'cluster runs', scopes: ['eos:evaluate'] })).token;
  browser = await launchBrowser();
  context = await browser.newContext({ viewport: { width: 1366, height: 900 }, extraHTTPHeaders: { 'x-forwarded-for': fakeClientIp() } });
  page = await context.newPage();
  page.on('console', (m) => {
    // 401 from the session restore while signed out, and the 402 of the declined card, are expected
    if (m.type() === 'error' && !/status of (401|402)/.test(m.text())) consoleErrors.push(m.text());
  });
  page.on('request', (r) => {
    if (!r.url().startsWith(gateway.url) && !r.url().startsWith('data:')) outsideRequests.push(r.url());
  });
});

after(async () => {
  await context?.close();
  await browser?.close();
  await keyService?.close();
  await gateway?.close();
  await db?.destroy();
});

test('journey 4: the owner upgrades Free → Group by test card, sees the invoice, and the refused batch is accepted', async () => {
  const refused = await evaluateBatch(gateway.url, token, 10_001);
  assert.equal(refused.status, 413, JSON.stringify(refused));
  assert.equal(refused.type, '/problems/batch-too-large');
  assert.match(refused.detail ?? '', /Plan & billing page/);

  // Sign in and open Plan & billing.
  await page.goto(`${gateway.url}/sign-in`, { waitUntil: 'networkidle' });
  await page.getByLabel('E-mail').fill(owner.email);
  await page.getByLabel('Password').fill(owner.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/overview$/);
  await page.getByRole('link', { name: 'Plan & billing' }).click();
  await page.waitForURL(/\/billing$/);

  // The plans side by side with their limits; Free is current.
  const plans = page.locator('article.plan');
  await plans.first().waitFor();
  assert.equal(await plans.count(), 3);
  assert.equal(await page.locator('.current-name').innerText(), 'Free');
  const group = page.locator('article[data-plan="group"]');
  assert.match(await group.innerText(), /49\.00 USD/);
  assert.match(await group.innerText(), /1 million points/);
  assert.match(await page.locator('article[data-plan="facility"]').innerText(), /unlimited/);
  assert.match(await page.locator('fw-card-form .test-mode').innerText(), /Test mode/);
  await page.screenshot({ path: artifactPath('journey-4-01-plans.png'), fullPage: true });

  // A declined test card: the reason is shown, no card is saved.
  const cardForm = page.locator('fw-card-form');
  await cardForm.locator('tr', { hasText: 'Visa, declined' }).getByRole('button', { name: 'Use' }).click();
  await cardForm.getByRole('button', { name: 'Save card' }).click();
  await cardForm.locator('.card-error').waitFor();
  assert.match(await cardForm.locator('.card-error').innerText(), /declined.*No card was saved/s);
  assert.match(await page.locator('.card-on-file').innerText(), /No card on file/);

  // A good one.
  await cardForm.locator('tr', { hasText: /^\s*4242/ }).getByRole('button', { name: 'Use' }).click();
  await cardForm.getByRole('button', { name: 'Save card' }).click();
  await page.locator('.card-on-file', { hasText: 'Visa ending 4242' }).waitFor();
  assert.equal(await cardForm.getByLabel('Test card number').inputValue(), '', 'the number is cleared once saved');

  // Upgrade, after a confirmation that says what is charged and when.
  await group.getByRole('button', { name: 'Upgrade to Group' }).click();
  const dialog = page.getByRole('alertdialog');
  await dialog.waitFor();
  const question = await dialog.innerText();
  assert.match(question, /Visa ending 4242 is charged 49\.00 USD now/);
  assert.match(question, /limits apply at once/);
  await page.screenshot({ path: artifactPath('journey-4-02-confirm-upgrade.png') });
  await dialog.getByRole('button', { name: 'Pay 49.00 USD and upgrade' }).click();

  await page.locator('.current-name', { hasText: 'Group' }).waitFor();
  const invoiceRow = page.locator('table.invoices tbody tr').first();
  await invoiceRow.waitFor();
  const invoiceText = await invoiceRow.innerText();
  assert.match(invoiceText, /FW-/);
  assert.match(invoiceText, /49\.00 USD/);
  assert.match(invoiceText, /paid/);
  assert.match(await page.locator('.period').innerText(), /Paid period: .+ – .+ · the points quota resets on the first of every month \(UTC\)/);
  await page.screenshot({ path: artifactPath('journey-4-03-upgraded-invoice.png'), fullPage: true });

  // The new limits apply at once: the refused batch is accepted.
  const accepted = await evaluateBatch(gateway.url, token, 10_001);
  assert.equal(accepted.status, 200, JSON.stringify(accepted));

  const receipt = await waitForMail(owner.email, { subject: /^Receipt FW-/ });
  assert.match(receipt.text, /49\.00 USD for the Group plan/);

  // A reload keeps the page and its state.
  await page.reload({ waitUntil: 'networkidle' });
  await page.locator('.current-name', { hasText: 'Group' }).waitFor();

  assert.deepEqual(consoleErrors, []);
  assert.deepEqual(outsideRequests, []);
});
