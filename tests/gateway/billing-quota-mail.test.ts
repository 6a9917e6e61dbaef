/**
 * Quota e-mails (DESIGN.md §1 journey 3) caught by the SMTP catcher: the owners get one mail when
 * the organisation passes 80 % of the period's points and one when it reaches 100 % (or is refused
 * over quota with at least 99 % used) — once per period each, also when a second gateway instance
 * sees the same organisation. The period's earlier use is written straight into usage_minutes
 * (evaluating two million points in a test would only cost time); the requests that cross the
 * thresholds go through the real evaluation path and meter.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { makeOrganisation, makeUser, type TestUser } from '../support/accounts.js';
import { mailsTo, waitForMail } from '../support/mail.js';
import { evaluateBatch } from '../support/payments.js';
import { createDb } from '../../gateway/db.js';
import { KeyService } from '../../gateway/keys/service.js';
import { FLUSH_INTERVAL_MS, periodStart } from '../../gateway/usage/meter.js';
import { LATENCY_BOUNDS_MS } from '../../gateway/usage/latency-buckets.js';
import { thresholdOf } from '../../gateway/billing/quota-mail.js';
import type { RunningGateway } from '../../gateway/server.js';

const FREE_QUOTA = 2_000_000; // DESIGN.md §6

let gateway: RunningGateway;
let other: RunningGateway;
let db: Knex;
let keyService: KeyService;

before(async () => {
  gateway = await startTestGateway();
  other = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
  keyService = new KeyService(db);
});

after(async () => {
  await keyService.close();
  await gateway.close();
  await other.close();
  await db.destroy();
});

/** An organisation on Free with an owner, a viewer and a key, that has already used `used` points this period. */
async function organisationThatUsed(used: number): Promise<{ owner: TestUser; viewer: TestUser; token: string; orgId: string }> {
  const owner = await makeUser(db, 'quota-owner');
  const viewer = await makeUser(db, 'quota-viewer');
  const org = await makeOrganisation(db, [[owner, 'owner'], [viewer, 'viewer']], 'quota');
  const created = await keyService.create({ organisationId: org.id, name: 'quota key', scopes: ['eos:evaluate'] });
  await db('usage_minutes').insert({
    organisation_id: org.id,
    api_key_id: created.id,
    endpoint: 'evaluate',
    minute: new Date(Math.floor(Math.max(periodStart(), Date.now() - 3_600_000) / 60_000) * 60_000),
    requests: 100,
    points: used,
    errors: 0,
    latency_ms_sum: 0,
    latency_buckets: new Array(LATENCY_BOUNDS_MS.length).fill(0),
  });
  return { owner, viewer, token: created.token, orgId: org.id };
}

const quotaMails = async (email: string) => (await mailsTo(email)).filter((m) => /points/.test(m.subject));

test('thresholds: 80 % from 0.8 of the quota, 100 % at the quota or on a refusal with ≥ 99 % used (common practice)', () => {
  assert.equal(thresholdOf({ used: 1_599_999, quota: FREE_QUOTA, refused: false }), 0);
  assert.equal(thresholdOf({ used: 1_600_000, quota: FREE_QUOTA, refused: false }), 80);
  assert.equal(thresholdOf({ used: 1_990_000, quota: FREE_QUOTA, refused: false }), 80);
  assert.equal(thresholdOf({ used: 1_990_000, quota: FREE_QUOTA, refused: true }), 100);
  assert.equal(thresholdOf({ used: 1_000_000, quota: FREE_QUOTA, refused: true }), 0);
  assert.equal(thresholdOf({ used: FREE_QUOTA, quota: FREE_QUOTA, refused: false }), 100);
});

test('passing 80 %: one mail to the owners, not repeated by later requests nor by another instance', async () => {
  const { owner, viewer, token } = await organisationThatUsed(1_599_990);
  assert.equal((await evaluateBatch(gateway.url, token, 5)).status, 200); // 1 599 995: below 80 %
  await new Promise((r) => setTimeout(r, 1_000));
  assert.equal((await quotaMails(owner.email)).length, 0, 'no mail below 80 %');

  assert.equal((await evaluateBatch(gateway.url, token, 20)).status, 200); // 1 600 015: past 80 %
  const mail = await waitForMail(owner.email, { subject: /80 % of its Fermiwell points/ });
  assert.match(mail.text, /1,600,015 of the 2,000,000 points the Free plan includes/);
  assert.match(mail.text, /399,985 points are left/);

  for (let i = 0; i < 3; i++) assert.equal((await evaluateBatch(gateway.url, token, 10)).status, 200);
  for (let i = 0; i < 2; i++) assert.equal((await evaluateBatch(other.url, token, 10)).status, 200);
  await new Promise((r) => setTimeout(r, 1_500)); // time for a wrong second mail to arrive
  assert.equal((await quotaMails(owner.email)).length, 1, 'once per period');
  assert.equal((await quotaMails(viewer.email)).length, 0, 'owners only');
});

test('reaching 100 %: refused with 429, one 100 % mail (and no 80 % mail after it), once', async () => {
  const { owner, token } = await organisationThatUsed(FREE_QUOTA - 5);
  const refused = await evaluateBatch(gateway.url, token, 10);
  assert.equal(refused.status, 429);
  assert.equal(refused.type, '/problems/quota-exceeded');
  const mail = await waitForMail(owner.email, { subject: /has used its Fermiwell points for this period/ });
  assert.match(mail.text, /refused with status 429/);
  assert.equal((await evaluateBatch(gateway.url, token, 5)).status, 200); // exactly the last 5 points
  // the other instance reads the period's use from the database: wait for this one's flush (FLUSH_INTERVAL_MS)
  await new Promise((r) => setTimeout(r, FLUSH_INTERVAL_MS * 2.5));
  assert.equal((await evaluateBatch(other.url, token, 5)).status, 429);
  await new Promise((r) => setTimeout(r, 1_500));
  const mails = await quotaMails(owner.email);
  assert.equal(mails.length, 1, mails.map((m) => m.subject).join(' | '));
});
