/**
 * Journey 2 (DESIGN.md §1, "Calling from a hydro code") in headless Chromium against a real gateway
 * and the test database: a developer of a research group signs in, creates a key that may evaluate
 * and submit jobs, and then
 * - their analysis code (examples/python's client, run with Debian's python3) sends a batch of
 *   (density, temperature) and the matching (density, specific energy) inversion with that key;
 * - on the Jobs page they upload the same states as CSV, follow the job to the end and download the
 *   results, which equal the direct evaluation;
 * - they request a table built for their code's grid, follow it, read its accuracy report and
 *   download the HDF5 file, which Debian's h5dump reads.
 * Screenshots go to test-results/e2e/journey-2-*.png.
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { artifactPath, launchBrowser } from '../support/browser.js';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { fakeClientIp, makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { createDb } from '../../gateway/db.js';
import { repoRoot } from '../../gateway/config.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let browser: Browser;
let context: BrowserContext;
let page: Page;
let developer: TestUser;
const consoleErrors: string[] = [];
const db = createDb(testDatabaseUrl(), 2);

// a few zones of a helium shell on a white dwarf (invented states for the journey)
const DENSITY = [1e5, 1e6, 3e6, 1e7];
const TEMPERATURE = [2e8, 5e8, 1e9, 2e9];

before(async () => {
  gateway = await startTestGateway();
  developer = await makeUser(db, 'hydrodev');
  const owner = await makeUser(db, 'hydroowner');
  const org = await makeOrganisation(db, [[owner, 'owner'], [developer, 'developer']], 'hydro');
  await db('organisations').where('id', org.id).update({ plan_id: 'group' });
  browser = await launchBrowser();
  context = await browser.newContext({ viewport: { width: 1366, height: 900 }, acceptDownloads: true, extraHTTPHeaders: { 'x-forwarded-for': fakeClientIp() } });
  page = await context.newPage();
  page.on('console', (m) => {
    if (m.type() === 'error' && !/status of 401/.test(m.text())) consoleErrors.push(m.text());
  });
});

after(async () => {
  await context?.close();
  await browser?.close();
  await gateway?.close();
  await db.destroy();
});

function run(command: string, args: string[], options: { input?: string; env?: Record<string, string> } = {}): Promise<{ status: number | null; stdout: string; stderr: string }> {
  // asynchronously: the gateway the child talks to runs in this process
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { env: { ...process.env, ...options.env }, stdio: ['pipe', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (b: Buffer) => (stdout += b));
    child.stderr.on('data', (b: Buffer) => (stderr += b));
    const timer = setTimeout(() => child.kill('SIGKILL'), 120_000);
    child.on('error', reject);
    child.on('exit', (status) => {
      clearTimeout(timer);
      resolve({ status, stdout, stderr });
    });
    child.stdin.end(options.input ?? '');
  });
}

async function evaluateDirect(token: string): Promise<Record<string, number[]>> {
  const res = await fetch(`${gateway.url}/v1/eos/evaluate`, {
    method: 'POST',
    headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
    body: JSON.stringify({ density: DENSITY, temperature: TEMPERATURE, composition: { mixture: 'he4' }, fields: ['pressure', 'specificEnergy'] }),
  });
  assert.equal(res.status, 200);
  return ((await res.json()) as { values: Record<string, number[]> }).values;
}

test('journey 2: a key for a code, batches from Python, a batch job and a table built for the grid', async () => {
  // Sign in; the developer's organisation is the current one.
  await page.goto(`${gateway.url}/sign-in`, { waitUntil: 'networkidle' });
  await page.getByLabel('E-mail').fill(developer.email);
  await page.getByLabel('Password').fill(developer.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/overview$/);

  // A key that may evaluate and submit jobs.
  await page.getByRole('link', { name: 'Keys' }).click();
  await page.getByRole('button', { name: 'Create key' }).click();
  const dialog = page.getByRole('dialog', { name: 'New API key' });
  await dialog.getByLabel('Name').fill('shell detonation runs');
  await dialog.getByRole('checkbox', { name: /Jobs/ }).check();
  await dialog.getByRole('button', { name: 'Create key' }).click();
  const secret = page.getByRole('dialog', { name: /Your new secret/ });
  const token = await secret.getByLabel('API key').inputValue();
  await secret.getByRole('button', { name: 'I have stored it' }).click();
  await secret.waitFor({ state: 'detached' });

  // The analysis code: the Python client of examples/ (binary form), forward and inverse.
  const python = `
import sys
sys.path.insert(0, ${JSON.stringify(path.join(repoRoot, 'examples', 'python'))})
from fermiwell_client import Client
fw = Client()
out = fw.evaluate(${JSON.stringify(DENSITY)}, ${JSON.stringify(TEMPERATURE)}, ["pressure", "specificEnergy"], mixture="he4")
back = fw.invert({"density": ${JSON.stringify(DENSITY)}, "specificEnergy": list(out["specificEnergy"])}, ["temperature"], mixture="he4")
print(list(out["status"]), list(back["status"]))
print(" ".join(repr(float(p)) for p in out["pressure"]))
print(" ".join(repr(float(t)) for t in back["temperature"]))
`;
  const analysis = await run('/usr/bin/python3', ['-'], { input: python, env: { FERMIWELL_URL: gateway.url, FERMIWELL_KEY: token } });
  assert.equal(analysis.status, 0, analysis.stderr);
  const [statuses, pressures, temperatures] = analysis.stdout.trim().split('\n');
  assert.equal(statuses, '[0, 0, 0, 0] [0, 0, 0, 0]');
  const direct = await evaluateDirect(token);
  assert.deepEqual(pressures!.split(' ').map(Number), direct['pressure'], 'the binary client gets the JSON numbers');
  temperatures!.split(' ').map(Number).forEach((t, i) => assert.ok(Math.abs(t / TEMPERATURE[i]! - 1) < 1e-8, `inversion recovers T at zone ${i}: ${t}`));

  // The Jobs page: upload the same states as CSV, follow the job, download the results.
  await page.getByRole('link', { name: 'Jobs' }).click();
  await page.waitForURL(/\/jobs$/);
  const csv = path.join(artifactPath('journey-2-zones.csv'));
  fs.writeFileSync(csv, ['# shell zones', 'density,temperature', ...DENSITY.map((d, i) => `${d},${TEMPERATURE[i]}`)].join('\n') + '\n');
  await page.getByTestId('job-file').setInputFiles(csv);
  const upload = page.locator('form.upload');
  await upload.getByLabel('Name (optional)').fill('shell zones');
  await upload.getByRole('combobox', { name: 'Composition' }).click();
  await page.getByRole('option', { name: 'Pure He-4' }).click();
  await upload.getByRole('button', { name: 'Submit job' }).click();
  const job = page.locator('li.job:not(.table-build)', { hasText: 'shell zones' });
  await job.and(page.locator('[data-state="completed"]')).waitFor({ timeout: 90_000 });
  await page.screenshot({ path: artifactPath('journey-2-01-job-completed.png') });
  const [csvDownload] = await Promise.all([page.waitForEvent('download'), job.getByRole('button', { name: 'CSV' }).click()]);
  const resultCsv = fs.readFileSync(await csvDownload.path(), 'utf8');
  const lines = resultCsv.trim().split('\n').filter((l) => !l.startsWith('#'));
  const header = lines[0]!.split(',');
  const pressureColumn = header.indexOf('pressure');
  assert.ok(pressureColumn >= 0, `the results name a pressure column: ${header.join(',')}`);
  assert.deepEqual(lines.slice(1).map((l) => Number(l.split(',')[pressureColumn])), direct['pressure'], 'the job computes what evaluate computes');

  // A table built for the code's grid, with its accuracy report, read by h5dump.
  const grid = page.locator('form.grid-form');
  for (const [label, value] of [['log₁₀ ρYe min', '4'], ['log₁₀ ρYe max', '7'], ['log₁₀ T min', '8'], ['log₁₀ T max', '9.5'], ['Points per decade', '4']] as const) {
    await grid.getByLabel(label).fill(value);
  }
  await grid.getByLabel('Name (optional)').fill('shell grid');
  await grid.getByRole('button', { name: 'Request table build' }).click();
  const build = page.locator('li.table-build', { hasText: 'shell grid' });
  await build.and(page.locator('[data-state="completed"]')).waitFor({ timeout: 180_000 });
  const report = await build.locator('.accuracy').innerText();
  assert.match(report, /largest relative error of P, e and s/);
  await page.screenshot({ path: artifactPath('journey-2-02-table-built.png') });
  const [tableDownload] = await Promise.all([page.waitForEvent('download'), build.getByRole('button', { name: 'HDF5 table' }).click()]);
  const tableFile = artifactPath('journey-2-shell-grid.h5');
  await tableDownload.saveAs(tableFile);
  const dump = await run('/usr/bin/h5dump', ['-H', tableFile]);
  assert.equal(dump.status, 0, dump.stderr);
  assert.match(dump.stdout, /log_density_ye/);
  assert.match(dump.stdout, /model_version/);

  assert.deepEqual(consoleErrors, [], 'no console errors');
});
