/**
 * Journey 1 (DESIGN.md §1) in headless Chromium against a real gateway, the test database and the
 * mail catcher: a new person signs up, opens the confirmation link from the caught mail, signs in,
 * creates an organisation, creates an API key (the secret is shown once, and it works against the
 * evaluation API), sees it listed, tries it in the Probe (an answer with units, the regime map and
 * the curves drawn with data), revokes it after a confirmation, and sees it revoked — and the
 * revoked secret is refused by the API. A reload keeps the session (the refresh cookie). Then the
 * owner invites a colleague on the Team page: listed, mailed, and in the audit log at once.
 */
import { spawn } from 'node:child_process';
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { artifactPath, launchBrowser } from '../support/browser.js';
import { startTestGateway } from '../support/gateway.js';
import { tokenFrom, waitForMail } from '../support/mail.js';
import { fakeClientIp, uniqueEmail } from '../support/accounts.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let browser: Browser;
let context: BrowserContext;
let page: Page;
const consoleErrors: string[] = [];
const outsideRequests: string[] = [];

const email = uniqueEmail('journey-key');
const password = 'degenerate electrons 42';
const displayName = 'Dana Postdoc';
const organisationName = 'White-dwarf merger group';
const keyName = 'cluster runs';

before(async () => {
  gateway = await startTestGateway();
  browser = await launchBrowser();
  // An invented client address of its own, so per-IP sign-up and sign-in limits of other tests
  // never count this browser's requests (the gateway trusts X-Forwarded-For from loopback only).
  context = await browser.newContext({ viewport: { width: 1366, height: 820 }, extraHTTPHeaders: { 'x-forwarded-for': fakeClientIp() } });
  page = await context.newPage();
  page.on('console', (m) => {
    // A 401 from the session restore on a signed-out page is expected and logged by Chromium.
    if (m.type() === 'error' && !/status of 401/.test(m.text())) consoleErrors.push(m.text());
  });
  page.on('request', (r) => {
    if (!r.url().startsWith(gateway.url) && !r.url().startsWith('data:')) outsideRequests.push(r.url());
  });
});

after(async () => {
  await context?.close();
  await browser?.close();
  await gateway?.close();
});

async function evaluateWith(token: string): Promise<{ status: number; type?: string }> {
  const res = await fetch(`${gateway.url}/v1/eos/regime`, {
    method: 'POST',
    headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
    body: JSON.stringify({ density: [1e6], temperature: [1e8], composition: { mixture: 'c12-o16' }, fields: ['degeneracy'] }),
  });
  const body = (await res.json().catch(() => ({}))) as { type?: string };
  return { status: res.status, type: body.type };
}

function runPython(code: string, env: Record<string, string>): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn('/usr/bin/python3', ['-'], { env: { ...process.env, ...env }, stdio: ['pipe', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (b: Buffer) => (stdout += b));
    child.stderr.on('data', (b: Buffer) => (stderr += b));
    const timer = setTimeout(() => child.kill('SIGKILL'), 60_000);
    child.on('error', reject);
    child.on('exit', (status) => {
      clearTimeout(timer);
      resolve({ status, stdout, stderr });
    });
    child.stdin.end(code);
  });
}

test('journey 1: sign up, verify, sign in, create an organisation, create a key, revoke it', async () => {
  // A signed-out visitor is sent to sign-in.
  await page.goto(`${gateway.url}/keys`, { waitUntil: 'networkidle' });
  await page.waitForURL(/\/sign-in\?returnUrl=%2Fkeys$/);
  assert.equal(await page.locator('mat-sidenav').count(), 0, 'no side navigation while signed out');

  // Sign up.
  await page.getByRole('link', { name: 'Create an account' }).click();
  await page.waitForURL(/\/sign-up$/);
  await page.getByLabel('Your name').fill(displayName);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByLabel('Repeat the password').fill(password);
  await page.getByRole('button', { name: 'Create account' }).click();
  await page.getByRole('heading', { name: 'Check your inbox' }).waitFor();
  assert.match(await page.locator('main').innerText(), new RegExp(email.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')));
  await page.screenshot({ path: artifactPath('journey-1-01-check-inbox.png') });

  // The confirmation mail and its link (token in the fragment).
  const mail = await waitForMail(email, { subject: /Confirm your e-mail/ });
  const verifyToken = tokenFrom(mail, 'verify-email');
  await page.goto(`${gateway.url}/verify-email#token=${encodeURIComponent(verifyToken)}`, { waitUntil: 'networkidle' });
  await page.getByText('Your address is confirmed').waitFor();
  assert.ok(!page.url().includes(verifyToken), 'the token is taken out of the address bar');
  await page.screenshot({ path: artifactPath('journey-1-02-verified.png') });

  // Sign in: no organisation yet, so the create-organisation step comes first.
  await page.getByRole('link', { name: 'Sign in' }).click();
  await page.waitForURL(/\/sign-in$/);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/new-organisation$/);
  await page.getByLabel('Organisation name').fill(organisationName);
  await page.screenshot({ path: artifactPath('journey-1-03-new-organisation.png') });
  await page.getByRole('button', { name: 'Create organisation' }).click();
  await page.waitForURL(/\/overview$/);
  assert.match(await page.locator('.fw-org-switcher').innerText(), new RegExp(organisationName));

  // Keys: empty at first.
  await page.getByRole('link', { name: 'Keys' }).click();
  await page.waitForURL(/\/keys$/);
  await page.getByText('No keys yet.').waitFor();

  // Create a key; the secret is shown once.
  await page.getByRole('button', { name: 'Create key' }).click();
  const createDialog = page.getByRole('dialog', { name: 'New API key' });
  await createDialog.getByLabel('Name').fill(keyName);
  await createDialog.getByRole('button', { name: 'Create key' }).click();
  const secretDialog = page.getByRole('dialog', { name: new RegExp(`Your new secret for “${keyName}”`) });
  await secretDialog.waitFor();
  const token = await secretDialog.getByLabel('API key').inputValue();
  assert.match(token, /^fwk_[a-z0-9]{8}_[A-Za-z0-9]{32}$/);
  assert.match(await secretDialog.innerText(), /you won’t see this secret again/);
  await secretDialog.getByRole('button', { name: 'Copy' }).click();
  await secretDialog.getByRole('button', { name: 'Copied' }).waitFor();
  await page.screenshot({ path: artifactPath('journey-1-04-secret-shown-once.png') });
  await secretDialog.getByRole('button', { name: 'I have stored it' }).click();
  await secretDialog.waitFor({ state: 'detached' });

  // The key works against the evaluation API.
  const before = await evaluateWith(token);
  assert.equal(before.status, 200, `the new key evaluates (got ${before.status} ${before.type ?? ''})`);

  // Listed, with its public id and state; the secret is nowhere on the page any more.
  const keyId = /^fwk_([a-z0-9]{8})_/.exec(token)![1]!;
  const row = page.locator(`tr[data-key-id="${keyId}"]`);
  await row.waitFor();
  const rowText = await row.innerText();
  assert.match(rowText, new RegExp(keyName));
  assert.match(rowText, new RegExp(`fwk_${keyId}_`));
  assert.match(rowText, /eos:evaluate/);
  assert.match(rowText, new RegExp(displayName));
  assert.match(rowText, /active/i);
  assert.ok(!(await page.content()).includes(token.slice(13)), 'the secret is gone from the page');
  await page.screenshot({ path: artifactPath('journey-1-05-key-listed.png') });

  // Try it in the Probe: one forward request, then the regime map and the curves, with data.
  await page.getByRole('link', { name: 'Probe' }).click();
  await page.waitForURL(/\/probe$/);
  await page.getByLabel('Key secret').fill(token);
  await page.getByRole('button', { name: 'Send request' }).click();
  const response = page.locator('section[aria-labelledby="response-heading"]');
  await response.locator('table.result-table').waitFor();
  const answer = await response.innerText();
  assert.match(answer, /Pressure/i);
  assert.match(answer, /erg\/cm³|dyn\/cm²|g\/cm³/, 'values are shown with units');
  // Copy the Python snippet and run it as a user would (Debian's python3, the key in the environment).
  await page.getByRole('tab', { name: 'Python' }).click();
  const snippetPanel = page.locator('fw-snippets .mat-mdc-tab-body-active');
  await snippetPanel.getByRole('button', { name: 'Copy' }).click();
  await snippetPanel.getByRole('button', { name: 'Copied' }).waitFor();
  const python = await snippetPanel.locator('pre').innerText();
  assert.ok(!python.includes(token.slice(13)), 'the secret is not written into the snippet');
  // asynchronously: the gateway answering the snippet runs in this process
  const run = await runPython(python, { FERMIWELL_KEY: token });
  assert.equal(run.status, 0, `the copied Python snippet runs: ${run.stderr}`);
  assert.match(run.stdout, /pressure/i, run.stdout);
  await page.getByRole('button', { name: 'Draw regime map' }).click();
  const map = page.locator('fw-regime-map .chart canvas');
  await map.waitFor();
  await page.getByRole('button', { name: 'Draw curves' }).click();
  const curves = page.locator('fw-state-curves .chart canvas');
  await curves.waitFor();
  await page.waitForTimeout(500); // the charts' entry animation
  for (const [name, canvas] of [['regime map', map], ['curves', curves]] as const) {
    const inked = await canvas.evaluate((c: HTMLCanvasElement) => {
      const g = c.getContext('2d')!;
      const { data } = g.getImageData(0, 0, c.width, c.height);
      const colours = new Set<number>();
      let painted = 0;
      for (let i = 0; i < data.length; i += 4 * 7) {
        if (data[i + 3]! > 0) painted++;
        colours.add((data[i]! << 16) | (data[i + 1]! << 8) | data[i + 2]!);
      }
      return { painted, colours: colours.size };
    });
    assert.ok(inked.painted > 1000 && inked.colours > 5, `${name} is drawn with data (${JSON.stringify(inked)})`);
  }
  assert.match((await page.locator('fw-regime-map .legend').innerText()).toLowerCase(), /degenerate/);
  await page.screenshot({ path: artifactPath('journey-1-06-probe.png'), fullPage: true });

  // Back to the keys.
  await page.getByRole('link', { name: 'Keys' }).click();
  await row.waitFor();

  // Revoke, after a confirmation.
  await row.getByRole('button', { name: `Revoke ${keyName}` }).click();
  const confirm = page.getByRole('alertdialog', { name: `Revoke “${keyName}”?` });
  await confirm.waitFor();
  await page.screenshot({ path: artifactPath('journey-1-07-revoke-confirmation.png') });
  await confirm.getByRole('button', { name: 'Revoke key' }).click();
  await confirm.waitFor({ state: 'detached' });
  await row.getByText('revoked', { exact: true }).waitFor();
  assert.equal(await row.getByRole('button', { name: `Revoke ${keyName}` }).count(), 0, 'no revoke button on a revoked key');
  await page.screenshot({ path: artifactPath('journey-1-08-key-revoked.png') });

  const afterRevoke = await evaluateWith(token);
  assert.equal(afterRevoke.status, 401);
  assert.equal(afterRevoke.type, '/problems/revoked-api-key');

  // A reload restores the session from the refresh cookie and shows the same state.
  await page.reload({ waitUntil: 'networkidle' });
  await page.waitForURL(/\/keys$/);
  await page.locator(`tr[data-key-id="${keyId}"]`).getByText('revoked', { exact: true }).waitFor();

  // The owner invites a colleague: the invitation is listed, mailed, and the audit log shows it at once.
  const colleague = uniqueEmail('journey-key-colleague');
  await page.getByRole('link', { name: 'Team' }).click();
  await page.waitForURL(/\/team$/);
  await page.getByLabel('E-mail to invite').fill(colleague);
  await page.getByRole('button', { name: 'Send invitation' }).click();
  await page.getByRole('cell', { name: colleague, exact: true }).waitFor();
  await page.locator('table.audit-table').getByText('invitation.created').waitFor();
  await page.screenshot({ path: artifactPath('journey-1-09-invitation-sent.png') });
  await waitForMail(colleague, { subject: new RegExp(`invited you to ${organisationName}`) });

  assert.deepEqual(outsideRequests, [], 'nothing is fetched from outside the gateway');
  assert.deepEqual(consoleErrors, [], 'no console errors');
});
