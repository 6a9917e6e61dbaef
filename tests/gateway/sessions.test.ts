/**
 * Sessions against a real gateway and database: access tokens that were tampered with, signed
 * differently, unsigned or expired; refresh-token rotation; reuse of a refresh token revoking the
 * whole family; sign-out; the refresh cookie's attributes and CSRF guard; and sign-in rate limits
 * that answer the same whether or not an address has an account.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import jwt from 'jsonwebtoken';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser, refreshCookieOf, uniqueEmail } from '../support/accounts.js';
import { createDb } from '../../gateway/db.js';
import { hashToken } from '../../gateway/auth/tokens.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let db: Knex;
const secret = () => {
  const value = process.env['JWT_SECRET'];
  assert.ok(value, 'npm test passes JWT_SECRET');
  return value;
};

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
});
after(async () => {
  await gateway.close();
  await db.destroy();
});

async function signedIn() {
  const user = await makeUser(db, 'session');
  const c = new Client(gateway.url);
  const answer = await c.signIn(user.email, user.password);
  assert.equal(answer.status, 200, JSON.stringify(answer.body));
  return { user, c, answer };
}

const meWith = (token: string) => new Client(gateway.url).get('/v1/me', { headers: { authorization: `Bearer ${token}` } });

describe('access tokens', () => {
  test('a valid token works; no token, a tampered, re-signed, unsigned or expired one does not', async () => {
    const { user, c } = await signedIn();
    const token = c.accessToken!;
    assert.equal((await meWith(token)).status, 200);

    const none = await new Client(gateway.url).get('/v1/me');
    assert.equal(none.status, 401);
    assert.equal(none.body.type, '/problems/session-required');

    // payload changed (another user id), signature kept
    const [header, payload, signature] = token.split('.');
    const claims = JSON.parse(Buffer.from(payload!, 'base64url').toString());
    const forged = `${header}.${Buffer.from(JSON.stringify({ ...claims, sub: '00000000-0000-4000-8000-000000000000' })).toString('base64url')}.${signature}`;
    const tampered = await meWith(forged);
    assert.equal(tampered.status, 401);
    assert.equal(tampered.body.type, '/problems/invalid-session');

    // signed with a key that is not ours
    const foreign = jwt.sign({ sid: claims.sid }, 'x'.repeat(40), { algorithm: 'HS256', subject: user.id, issuer: 'fermiwell', audience: 'fermiwell-dashboard', expiresIn: 60 });
    assert.equal((await meWith(foreign)).body.type, '/problems/invalid-session');

    // alg "none": no signature at all
    const unsigned = `${Buffer.from(JSON.stringify({ alg: 'none', typ: 'JWT' })).toString('base64url')}.${payload}.`;
    assert.equal((await meWith(unsigned)).status, 401);

    // right key, wrong audience
    const otherAudience = jwt.sign({ sid: claims.sid }, secret(), { algorithm: 'HS256', subject: user.id, issuer: 'fermiwell', audience: 'somewhere-else', expiresIn: 60 });
    assert.equal((await meWith(otherAudience)).body.type, '/problems/invalid-session');

    // right key, expired
    const expired = jwt.sign({ sid: claims.sid, exp: Math.floor(Date.now() / 1000) - 60 }, secret(), { algorithm: 'HS256', subject: user.id, issuer: 'fermiwell', audience: 'fermiwell-dashboard' });
    const answer = await meWith(expired);
    assert.equal(answer.status, 401);
    assert.equal(answer.body.type, '/problems/session-expired');
    assert.match(answer.body.detail, /refresh/);

    // garbage
    assert.equal((await meWith('not.a.token')).body.type, '/problems/invalid-session');
  });

  test('an API key is not a session', async () => {
    const answer = await meWith('fwk_abcdefgh_ABCDEFGHIJKLMNOPQRSTUVWXYZ012345');
    assert.equal(answer.status, 401);
    assert.equal(answer.body.type, '/problems/session-required');
    assert.match(answer.body.detail, /API keys/);
  });

  test('the organisation header selects an organisation of the caller only', async () => {
    const { user, c } = await signedIn();
    const mine = await makeOrganisation(db, [[user, 'maintainer']], 'header');
    const stranger = await makeUser(db, 'stranger');
    const theirs = await makeOrganisation(db, [[stranger, 'owner']], 'header');
    c.organisationId = mine.id;
    const me = await c.get('/v1/me');
    assert.deepEqual(me.body.currentOrganisation, { id: mine.id, role: 'maintainer' });
    c.organisationId = theirs.id;
    const refused = await c.get('/v1/me');
    assert.equal(refused.status, 404);
    assert.equal(refused.body.type, '/problems/organisation-not-found');
  });
});

describe('refresh tokens', () => {
  test('the cookie: HttpOnly, SameSite=Strict, scoped to the session path, not Secure on loopback', async () => {
    const { answer } = await signedIn();
    const cookie = refreshCookieOf(answer.headers)!;
    assert.ok(cookie.value.length >= 40);
    assert.match(cookie.attributes, /HttpOnly/i);
    assert.match(cookie.attributes, /SameSite=Strict/i);
    assert.match(cookie.attributes, /Path=\/v1\/auth\/session(;|$)/);
    assert.doesNotMatch(cookie.attributes, /Secure/i);
    assert.ok(!JSON.stringify(answer.body).includes(cookie.value), 'the refresh token is only in the cookie');
    // stored hashed
    assert.equal(await db('refresh_tokens').where({ token_hash: cookie.value }).first(), undefined);
    assert.ok(await db('refresh_tokens').where({ token_hash: hashToken(cookie.value) }).first());
  });

  test('Secure when the public address is not loopback http', async () => {
    const remote = await startTestGateway({ PUBLIC_URL: 'https://fermiwell.example' });
    try {
      const user = await makeUser(db, 'secure');
      const answer = await new Client(remote.url).signIn(user.email, user.password);
      assert.match(refreshCookieOf(answer.headers)!.attributes, /Secure/i);
    } finally {
      await remote.close();
    }
  });

  test('refresh rotates: a new access token and a new cookie; the old cookie is used up', async () => {
    const { c } = await signedIn();
    const firstCookie = c.refreshCookie!;
    const firstAccess = c.accessToken!;
    const refreshed = await c.refresh();
    assert.equal(refreshed.status, 200, JSON.stringify(refreshed.body));
    assert.notEqual(c.refreshCookie, firstCookie);
    assert.ok(refreshed.body.accessToken);
    assert.equal((await c.get('/v1/me')).status, 200);
    const child = await db('refresh_tokens').where({ token_hash: hashToken(c.refreshCookie!) }).first();
    const parent = await db('refresh_tokens').where({ token_hash: hashToken(firstCookie) }).first();
    assert.equal(child.parent_id, parent.id);
    assert.equal(child.session_id, parent.session_id);
    assert.ok(parent.used_at);
    // the access token issued before stays valid until it expires
    assert.equal((await meWith(firstAccess)).status, 200);
  });

  test('reusing a used refresh token revokes the whole family', async () => {
    const { user, c } = await signedIn();
    const stolen = c.refreshCookie!;
    assert.equal((await c.refresh()).status, 200); // the rightful client rotates
    const legit = c.refreshCookie!;

    const thief = new Client(gateway.url);
    thief.refreshCookie = stolen;
    const reuse = await thief.refresh();
    assert.equal(reuse.status, 401);
    assert.equal(reuse.body.type, '/problems/refresh-token-reused');
    assert.equal(refreshCookieOf(reuse.headers)?.value, '', 'the cookie is cleared');

    // every token of the family and its access tokens are dead now
    c.refreshCookie = legit;
    const after = await c.refresh();
    assert.equal(after.status, 401);
    assert.equal(after.body.type, '/problems/session-revoked');
    assert.equal((await c.get('/v1/me')).body.type, '/problems/session-revoked');

    const audit = await db('audit_log').where({ action: 'auth.refresh-token-reused', target_id: user.id });
    assert.equal(audit.length, 1);
    // other sessions of the same person are untouched
    assert.equal((await new Client(gateway.url).signIn(user.email, user.password)).status, 200);
  });

  test('an expired refresh token, an unknown one, none', async () => {
    const { c } = await signedIn();
    await db('refresh_tokens').where({ token_hash: hashToken(c.refreshCookie!) }).update({ expires_at: db.raw("now() - interval '1 second'") });
    const expired = await c.refresh();
    assert.equal(expired.status, 401);
    assert.equal(expired.body.type, '/problems/session-expired');

    const unknown = new Client(gateway.url);
    unknown.refreshCookie = 'A'.repeat(43);
    assert.equal((await unknown.refresh()).body.type, '/problems/invalid-refresh-token');
    const none = await new Client(gateway.url).refresh();
    assert.equal(none.status, 401);
    assert.equal(none.body.type, '/problems/session-required');
  });

  test('refresh and sign-out refuse requests a cross-site form could make (CSRF)', async () => {
    const { c } = await signedIn();
    const form = await c.call('POST', '/v1/auth/session/refresh', 'x=1', { headers: { 'content-type': 'application/x-www-form-urlencoded' }, auth: false });
    assert.equal(form.status, 403);
    assert.equal(form.body.type, '/problems/csrf-check-failed');
    const signOut = await c.call('DELETE', '/v1/auth/session', undefined, {});
    assert.equal(signOut.status, 403);
    // the custom header is enough, without a body
    const withHeader = await c.call('POST', '/v1/auth/session/refresh', undefined, { headers: { 'fermiwell-csrf': '1' }, auth: false });
    assert.equal(withHeader.status, 200, JSON.stringify(withHeader.body));
  });

  test('sign-out ends the session at once: access token and refresh cookie', async () => {
    const { c } = await signedIn();
    const cookie = c.refreshCookie!;
    const out = await c.call('DELETE', '/v1/auth/session', undefined, { headers: { 'fermiwell-csrf': '1' } });
    assert.equal(out.status, 204);
    assert.equal(refreshCookieOf(out.headers)?.value, '');
    assert.equal((await c.get('/v1/me')).body.type, '/problems/session-revoked');
    c.refreshCookie = cookie;
    assert.equal((await c.refresh()).body.type, '/problems/session-revoked');
    // idempotent
    assert.equal((await c.call('DELETE', '/v1/auth/session', undefined, { headers: { 'fermiwell-csrf': '1' } })).status, 204);
  });
});

describe('sign-in limits and no address enumeration', () => {
  test('wrong passwords for a real account and for no account get the same answers, then the same 429', async () => {
    const user = await makeUser(db, 'target');
    const ghost = uniqueEmail('ghost');
    const runs: Array<Array<[number, string]>> = [];
    for (const email of [user.email, ghost]) {
      const c = new Client(gateway.url);
      const seen: Array<[number, string]> = [];
      for (let i = 0; i < 6; i++) {
        const answer = await c.signIn(email, `wrong password ${i}`);
        seen.push([answer.status, `${answer.body.type} ${answer.body.title} ${answer.body.detail}`]);
      }
      runs.push(seen);
    }
    assert.deepEqual(runs[0], runs[1]);
    assert.deepEqual(runs[0]!.map(([s]) => s), [401, 401, 401, 401, 401, 429]);
    assert.match(runs[0]![5]![1], /too-many-attempts/);

    // the account is locked for this window even with the right password, from any address
    const locked = await new Client(gateway.url).signIn(user.email, user.password);
    assert.equal(locked.status, 429);
    assert.ok(locked.headers.get('ratelimit'), 'IETF RateLimit header fields');

    const failures = await db('audit_log').where({ action: 'auth.sign-in-failed', target_id: user.id });
    assert.equal(failures.length, 5);
  });

  test('successful sign-ins do not count; failures from one address are limited across accounts', async () => {
    const limited = await startTestGateway({ SIGN_IN_FAILURES_PER_IP: '3' });
    try {
      const user = await makeUser(db, 'regular');
      const c = new Client(limited.url);
      for (let i = 0; i < 5; i++) assert.equal((await c.signIn(user.email, user.password)).status, 200);
      for (let i = 0; i < 3; i++) assert.equal((await c.signIn(uniqueEmail('spray'), 'guess guess guess')).status, 401);
      const blocked = await c.signIn(uniqueEmail('spray'), 'guess guess guess');
      assert.equal(blocked.status, 429);
      assert.equal(blocked.body.type, '/problems/too-many-attempts');
      // another client address is not affected
      assert.equal((await new Client(limited.url).signIn(user.email, user.password)).status, 200);
    } finally {
      await limited.close();
    }
  });
});
