/**
 * Journey 3 (DESIGN.md §1, "Watching usage") in headless Chromium against a real gateway and the
 * seeded demo (seeds/007_demo-usage.ts: sixty days of the demo group's two keys): the group lead
 * signs in, opens Usage and sees the charts drawn from the seeded data, switches between per key
 * and per endpoint, changes the range, exports the CSV and finds in it exactly what GET /v1/usage
 * answers for the same choice; opens Overview (quota burn-down, last seven days, warnings). Then
 * the operator signs in and opens Operator: the demo group is listed with its use this period,
 * and the service is ready; the operator raises the group's monthly points, and the owner's quota
 * follows at once (and the audit log says why). Screenshots are kept as test artifacts.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { artifactPath, launchBrowser } from '../support/browser.js';
import { startTestGateway } from '../support/gateway.js';
import { Client, fakeClientIp } from '../support/accounts.js';
import { DEMO_KEYS, DEMO_ORGANISATION, DEMO_USERS } from '../../seeds/demo-accounts.js';
import type { RunningGateway } from '../../gateway/server.js';

const owner = DEMO_USERS.find((u) => u.role === 'owner')!;
const operator = DEMO_USERS.find((u) => u.platformRole === 'operator')!;

let gateway: RunningGateway;
let browser: Browser;
const contexts: BrowserContext[] = [];
const consoleErrors: string[] = [];
const outsideRequests: string[] = [];

before(async () => {
  gateway = await startTestGateway();
  browser = await launchBrowser();
});

after(async () => {
  for (const c of contexts) await c.close();
  await browser?.close();
  await gateway?.close();
});

async function newPage(width = 1366, height = 860): Promise<Page> {
  const context = await browser.newContext({ viewport: { width, height }, acceptDownloads: true, extraHTTPHeaders: { 'x-forwarded-for': fakeClientIp() } });
  contexts.push(context);
  const page = await context.newPage();
  page.on('console', (m) => {
    if (m.type() === 'error' && !/status of 401/.test(m.text())) consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => consoleErrors.push(String(e)));
  page.on('request', (r) => {
    if (!r.url().startsWith(gateway.url) && !r.url().startsWith('data:') && !r.url().startsWith('blob:')) outsideRequests.push(r.url());
  });
  return page;
}

async function signIn(page: Page, email: string, password: string, landing: RegExp) {
  await page.goto(`${gateway.url}/sign-in`, { waitUntil: 'networkidle' });
  await page.getByLabel('E-mail').waitFor({ timeout: 15_000 }).catch(async (error) => {
    await page.screenshot({ path: artifactPath('journey-watch-failed-sign-in.png') });
    throw new Error(`the sign-in page did not show (browser errors: ${consoleErrors.join(' | ') || 'none'}): ${error}`);
  });
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(landing);
}

/** A chart drawn by ECharts: its canvas exists and is not blank. */
async function chartDrawn(page: Page, selector: string): Promise<boolean> {
  await page.locator(`${selector} canvas`).first().waitFor();
  return page.locator(`${selector} canvas`).first().evaluate((canvas: HTMLCanvasElement) => {
    const ctx = canvas.getContext('2d');
    if (!ctx || canvas.width === 0) return false;
    const { data } = ctx.getImageData(0, 0, canvas.width, canvas.height);
    let painted = 0;
    for (let i = 3; i < data.length; i += 4 * 16) if (data[i]! > 0) painted++;
    return painted > 50;
  });
}

/** The numbers table of the Usage page: day → [points, requests, errors]. */
async function tableRows(page: Page): Promise<Map<string, number[]>> {
  const rows = await page.locator('.usage-table tbody tr').evaluateAll((trs) => trs.map((tr) => Array.from(tr.children).map((c) => (c.textContent ?? '').trim())));
  return new Map(rows.map((cells) => [cells[0]!, cells.slice(1, 4).map((c) => Number(c.replace(/,/g, '')))]));
}

test('journey 3: the group lead watches usage per key and endpoint, exports it, and the operator sees the platform', async () => {
  const page = await newPage();
  await signIn(page, owner.email, owner.password, /\/overview$/);

  // ── Usage ──
  await page.getByRole('link', { name: 'Usage', exact: true }).click();
  await page.waitForURL(/\/usage$/);
  await page.getByRole('heading', { name: 'Points per day' }).waitFor();
  assert.ok(await chartDrawn(page, '.points-chart'), 'points chart drawn');
  assert.ok(await chartDrawn(page, '.requests-chart'), 'requests chart drawn');
  assert.ok(await chartDrawn(page, '.latency-chart'), 'latency chart drawn');
  const tiles = await page.locator('.tile-value').allInnerTexts();
  const points30 = Number(tiles[0]!.replace(/,/g, ''));
  assert.ok(points30 > 0, `the seeded points show (${tiles.join(' | ')})`);
  assert.match(await page.locator('.quota').innerText(), /points used .* on the \w+ plan/);
  await page.screenshot({ path: artifactPath('journey-watch-1-usage-per-key.png'), fullPage: true });

  // the legend names both demo keys (per key is the default split)
  const pointsLabel = (await page.locator('.points-chart').getAttribute('aria-label')) ?? '';
  assert.match(pointsLabel, /stacked per key/);

  // The same numbers through the API, with the owner's own session.
  const api = new Client(gateway.url);
  assert.equal((await api.signIn(owner.email, owner.password)).status, 200);
  const orgs = await api.get('/v1/organisations');
  const org = orgs.body.items.find((o: any) => o.slug === DEMO_ORGANISATION.slug);
  assert.ok(org, 'the demo organisation');
  const days = await tableRows(page);
  assert.equal(days.size, 30);
  const [first] = days.keys();
  const last = [...days.keys()].at(-1)!;
  const to = new Date(Date.parse(last) + 86_400_000).toISOString().slice(0, 10);
  const byKey = await api.get(`/v1/usage?organisationId=${org.id}&from=${first}&to=${to}&granularity=day&groupBy=key`);
  assert.equal(byKey.status, 200);
  const apiPoints = byKey.body.buckets.reduce((a: number, b: any) => a + b.points, 0);
  assert.equal(points30, apiPoints, 'the page total is the API total');
  assert.deepEqual([...new Set(byKey.body.buckets.map((b: any) => b.group))].sort(), DEMO_KEYS.map((k) => k.id).sort());

  // Per endpoint.
  await page.getByRole('radio', { name: 'Per endpoint' }).click();
  await page.waitForFunction(() => /stacked per endpoint/.test(document.querySelector('.points-chart')?.getAttribute('aria-label') ?? ''));
  await page.locator('.updating').waitFor({ state: 'detached' });
  assert.ok(await chartDrawn(page, '.points-chart'));
  await page.screenshot({ path: artifactPath('journey-watch-2-usage-per-endpoint.png'), fullPage: true });

  // Another range: the last 7 days.
  await page.getByRole('button', { name: 'Last 7 days' }).click();
  await page.waitForFunction(() => document.querySelectorAll('.usage-table tbody tr').length === 7);
  await page.locator('.updating').waitFor({ state: 'detached' });
  const week = await tableRows(page);
  const weekFrom = [...week.keys()][0]!;
  const weekTo = new Date(Date.parse([...week.keys()].at(-1)!) + 86_400_000).toISOString().slice(0, 10);
  assert.equal(weekTo, to, 'the range ends today as before');
  await page.screenshot({ path: artifactPath('journey-watch-3-usage-7-days.png'), fullPage: true });

  // Export: the file is what the API writes for this very choice, and its sums are the table's.
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export CSV' }).click()]);
  // named for the days it covers: the last is the table's last row (the API's range ends the day after)
  const weekLast = [...week.keys()].at(-1)!;
  assert.match(download.suggestedFilename(), new RegExp(`^usage-${org.id}-${weekFrom}-${weekLast}-day\\.csv$`));
  const csv = fs.readFileSync((await download.path())!, 'utf8');
  const fromApi = await api.call('GET', `/v1/usage?organisationId=${org.id}&from=${weekFrom}&to=${weekTo}&granularity=day&groupBy=endpoint&format=csv`, undefined, { headers: { accept: 'text/csv' } });
  assert.equal(fromApi.status, 200);
  assert.equal(csv, fromApi.body, 'the exported file equals GET /v1/usage?format=csv for the same range and split');
  const lines = csv.trim().split('\r\n');
  assert.equal(lines[0], 'start,group,requests,points,errors,latencyP50Ms,latencyP90Ms,latencyP99Ms');
  const perDay = new Map<string, number[]>();
  const endpoints = new Set<string>();
  for (const line of lines.slice(1)) {
    const [start, group, requests, points, errors] = line.split(',');
    endpoints.add(group!);
    const row = perDay.get(start!.slice(0, 10)) ?? [0, 0, 0];
    perDay.set(start!.slice(0, 10), [row[0]! + Number(points), row[1]! + Number(requests), row[2]! + Number(errors)]);
  }
  for (const [day, values] of week) assert.deepEqual(perDay.get(day) ?? [0, 0, 0], values, `CSV and page agree on ${day}`);
  assert.ok([...endpoints].every((e) => ['/v1/eos/evaluate', '/v1/eos/invert', '/v1/eos/regime'].includes(e)), [...endpoints].join(', '));

  // ── Overview ──
  await page.getByRole('link', { name: 'Overview', exact: true }).click();
  await page.waitForURL(/\/overview$/);
  await page.getByRole('heading', { name: 'Quota burn-down' }).waitFor();
  assert.ok(await chartDrawn(page, '.burn .chart'), 'burn-down drawn');
  assert.ok(await chartDrawn(page, '.chart.week'), 'last seven days drawn');
  const overview = await page.locator('main').innerText();
  assert.match(overview, /plan/);
  assert.match(overview, /Needs attention/);
  // the seeded bad afternoon of the notebook key two days ago (seeds/007_demo-usage.ts)
  assert.match(overview, new RegExp(`Key “${DEMO_KEYS[1].name.replace(/[()]/g, '\\$&')}” \\(${DEMO_KEYS[1].id}\\): [\\d,]+ of [\\d,]+ requests failed in the last 7 days`));
  assert.match(overview, /Recent jobs/);
  await page.screenshot({ path: artifactPath('journey-watch-4-overview.png'), fullPage: true });

  // A laptop screen keeps the charts readable (no page-wide horizontal scroll).
  await page.setViewportSize({ width: 1280, height: 720 });
  await page.getByRole('link', { name: 'Usage', exact: true }).click();
  await page.getByRole('heading', { name: 'Points per day' }).waitFor();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  assert.ok(overflow <= 0, `no horizontal scroll at 1280 px (${overflow} px)`);

  // ── Operator ──
  const operatorPage = await newPage();
  await signIn(operatorPage, operator.email, operator.password, /\/(overview|new-organisation|operator)$/);
  await operatorPage.goto(`${gateway.url}/operator`, { waitUntil: 'networkidle' });
  await operatorPage.getByRole('heading', { name: 'Operator', exact: true }).waitFor();
  await operatorPage.getByText('Ready', { exact: true }).waitFor();
  const row = operatorPage.locator(`tr[data-organisation-id="${org.id}"]`);
  await row.waitFor();
  const overviewAnswer = await api.get(`/v1/usage?organisationId=${org.id}`);
  const rowText = await row.innerText();
  assert.match(rowText, new RegExp(DEMO_ORGANISATION.name.slice(0, 20).replace(/[()]/g, '\\$&')));
  assert.ok(rowText.includes(overviewAnswer.body.quota.pointsUsed.toLocaleString('en-GB')), `this period's points (${overviewAnswer.body.quota.pointsUsed}) in "${rowText}"`);
  await operatorPage.screenshot({ path: artifactPath('journey-watch-5-operator.png'), fullPage: true });

  // The operator raises the group's monthly points for a campaign; the owner's quota follows at once.
  await row.getByRole('button', { name: /Change limits of/ }).click();
  const dialog = operatorPage.getByRole('dialog', { name: /Limits of/ });
  await dialog.getByLabel('Points per month').fill('600000000');
  await dialog.getByLabel('Reason').fill('Detonation campaign in December, agreed with the group lead');
  await operatorPage.screenshot({ path: artifactPath('journey-watch-6-operator-limits.png') });
  await dialog.getByRole('button', { name: 'Save limits' }).click();
  await dialog.waitFor({ state: 'detached' });
  await row.getByText('600,000,000 pts/month').waitFor();
  assert.match(await row.innerText(), /override/);
  const quotaNow = await api.get(`/v1/usage?organisationId=${org.id}`);
  assert.equal(quotaNow.body.quota.pointsQuota, 600_000_000);
  const audit = await api.get(`/v1/organisations/${org.id}/audit-log?action=plan.changed`);
  assert.equal(audit.body.items[0].details.reason, 'Detonation campaign in December, agreed with the group lead');
  // put the demo back as it was
  const operatorApi = new Client(gateway.url);
  assert.equal((await operatorApi.signIn(operator.email, operator.password)).status, 200);
  const restored = await operatorApi.call('PUT', `/v1/operator/organisations/${org.id}/limits`, {
    overrides: { pointsPerMonth: null, requestsPerSecond: null, maxBatch: null, tableBuildsPerMonth: null },
    reason: 'End of the journey test',
  });
  assert.equal(restored.status, 200);
  assert.equal(restored.body.override, null);

  // and the owner cannot open it
  await page.goto(`${gateway.url}/operator`, { waitUntil: 'networkidle' });
  await page.waitForURL(/\/overview$/);

  assert.deepEqual(outsideRequests, [], 'nothing is loaded from outside the gateway');
  assert.deepEqual(consoleErrors, [], 'no errors in the browser console');
});
