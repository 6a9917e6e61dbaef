/**
 * The e-mail flows of accounts against a real gateway, the real test database and the real SMTP
 * catcher: sign-up → the caught mail → verify → sign in; password reset; invitations accepted
 * signed out (signing up on the way) and signed in. Also: mails are plain text and HTML, and
 * requests for mail answer the same whether or not the address has an account.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeOrganisation, makeUser, uniqueEmail, type TestUser } from '../support/accounts.js';
import { mailsTo, tokenFrom, waitForMail } from '../support/mail.js';
import { createDb } from '../../gateway/db.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let db: Knex;

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 2);
});
after(async () => {
  await gateway.close();
  await db.destroy();
});

const client = () => new Client(gateway.url);

describe('sign-up, verification, sign-in', () => {
  test('sign up → confirmation mail (text and HTML) → verify → sign in → /v1/me', async () => {
    const c = client();
    const email = uniqueEmail('postdoc');
    const signUp = await c.post('/v1/auth/sign-up', { email, password: 'a long enough passphrase', displayName: 'Ada Postdoc' });
    assert.equal(signUp.status, 202, JSON.stringify(signUp.body));
    assert.equal(signUp.body.status, 'verification-sent');

    // not verified yet: the right password gets a 403 that says so
    const early = await c.signIn(email, 'a long enough passphrase');
    assert.equal(early.status, 403);
    assert.equal(early.body.type, '/problems/email-not-verified');
    assert.match(early.headers.get('content-type') ?? '', /problem\+json/);

    const mail = await waitForMail(email, { subject: /Confirm your e-mail/ });
    assert.match(mail.text, /Welcome, Ada Postdoc/);
    assert.match(mail.html, /<a href="http:\/\/127\.0\.0\.1:\d+\/verify-email#token=[^"]+"/);
    assert.match(mail.html, /Fermi<span[^>]*>well<\/span>/);
    assert.equal(mail.from[0]!.address, 'no-reply@fermiwell.example');
    const token = tokenFrom(mail, 'verify-email');

    const verified = await c.post('/v1/auth/verify-email', { token });
    assert.equal(verified.status, 200, JSON.stringify(verified.body));
    assert.equal(verified.body.user.email, email);
    assert.equal(verified.body.user.emailVerified, true);

    // the link works once
    const again = await c.post('/v1/auth/verify-email', { token });
    assert.equal(again.status, 400);
    assert.equal(again.body.type, '/problems/token-used');

    const signIn = await c.signIn(email, 'a long enough passphrase');
    assert.equal(signIn.status, 200, JSON.stringify(signIn.body));
    assert.equal(signIn.body.tokenType, 'Bearer');
    assert.ok(signIn.body.expiresIn > 0 && signIn.body.expiresIn <= 900);
    assert.ok(c.refreshCookie, 'the refresh cookie is set');

    const me = await c.get('/v1/me');
    assert.equal(me.status, 200);
    assert.equal(me.body.user.email, email);
    assert.equal(me.body.user.displayName, 'Ada Postdoc');
    assert.deepEqual(me.body.organisations, []);

    // journey 1 goes on: an organisation, of which the new user is the owner
    const org = await c.post('/v1/organisations', { name: 'Helium Shell Detonations' });
    assert.equal(org.status, 201, JSON.stringify(org.body));
    assert.equal(org.body.role, 'owner');
    assert.equal(org.body.plan, 'free');
    const mine = await c.get('/v1/organisations');
    assert.deepEqual(mine.body.items.map((o: any) => o.id), [org.body.id]);
  });

  test('signing up with a registered address answers the same and mails the owner instead', async () => {
    const existing = await makeUser(db, 'registered');
    const c = client();
    const answer = await c.post('/v1/auth/sign-up', { email: existing.email.toUpperCase(), password: 'another passphrase!', displayName: 'Someone Else' });
    assert.equal(answer.status, 202);
    assert.equal(answer.body.status, 'verification-sent');
    const mail = await waitForMail(existing.email, { subject: /tried to sign up/ });
    assert.match(mail.text, /you already have one/);
    // the existing password still works, the attempted one does not
    assert.equal((await c.signIn(existing.email, existing.password)).status, 200);
    assert.equal((await c.signIn(existing.email, 'another passphrase!')).status, 401);
  });

  test('a re-sent confirmation link replaces the earlier one', async () => {
    const c = client();
    const email = uniqueEmail('resend');
    await c.post('/v1/auth/sign-up', { email, password: 'passphrase number one', displayName: 'Re Send' });
    const first = tokenFrom(await waitForMail(email, { subject: /Confirm/ }), 'verify-email');
    const resend = await c.post('/v1/auth/verify-email/resend', { email });
    assert.equal(resend.status, 202);
    const second = tokenFrom(await waitForMail(email, { subject: /Confirm/, count: 2 }), 'verify-email');
    assert.notEqual(first, second);
    assert.equal((await c.post('/v1/auth/verify-email', { token: first })).body.type, '/problems/token-used');
    assert.equal((await c.post('/v1/auth/verify-email', { token: second })).status, 200);
    // resending for an unknown address answers exactly like for a known one
    const unknown = await c.post('/v1/auth/verify-email/resend', { email: uniqueEmail('nobody') });
    assert.equal(unknown.status, 202);
    assert.deepEqual(Object.keys(unknown.body).sort(), Object.keys(resend.body).sort());
  });

  test('bad sign-up bodies are 400 problems naming the field', async () => {
    const c = client();
    const short = await c.post('/v1/auth/sign-up', { email: uniqueEmail('short'), password: 'short', displayName: 'X' });
    assert.equal(short.status, 400);
    assert.equal(short.body.type, '/problems/invalid-request');
    assert.ok(short.body.errors.some((e: any) => e.field === 'password'));
    const notEmail = await c.post('/v1/auth/sign-up', { email: 'not-an-address', password: 'long enough password', displayName: 'X' });
    assert.ok(notEmail.body.errors.some((e: any) => e.field === 'email'));
    const tampered = await c.post('/v1/auth/verify-email', { token: 'x'.repeat(43) });
    assert.equal(tampered.status, 400);
    assert.equal(tampered.body.type, '/problems/invalid-token');
  });
});

describe('password reset and change', () => {
  test('forgot → mail → reset: new password works, old does not, every session ends', async () => {
    const user = await makeUser(db, 'forgetful');
    const laptop = client();
    assert.equal((await laptop.signIn(user.email, user.password)).status, 200);

    const c = client();
    const forgot = await c.post('/v1/auth/password/forgot', { email: user.email });
    assert.equal(forgot.status, 202);
    const mail = await waitForMail(user.email, { subject: /new Fermiwell password/ });
    assert.match(mail.html, /reset-password#token=/);
    const token = tokenFrom(mail, 'reset-password');

    const weak = await c.post('/v1/auth/password/reset', { token, password: 'short' });
    assert.equal(weak.status, 400);
    const reset = await c.post('/v1/auth/password/reset', { token, password: 'a brand new passphrase' });
    assert.equal(reset.status, 204);
    assert.equal((await c.post('/v1/auth/password/reset', { token, password: 'yet another passphrase' })).body.type, '/problems/token-used');

    assert.equal((await client().signIn(user.email, user.password)).status, 401);
    assert.equal((await client().signIn(user.email, 'a brand new passphrase')).status, 200);
    // the laptop's session ended with the reset
    const stale = await laptop.get('/v1/me');
    assert.equal(stale.status, 401);
    assert.equal(stale.body.type, '/problems/session-revoked');
    assert.equal((await laptop.refresh()).status, 401);

    const audit = await db('audit_log').where({ target_id: user.id, action: 'auth.password-reset' });
    assert.equal(audit.length, 1);
  });

  test('a reset request for an unknown address answers the same and sends nothing', async () => {
    const nobody = uniqueEmail('ghost');
    const answer = await client().post('/v1/auth/password/forgot', { email: nobody });
    assert.equal(answer.status, 202);
    assert.equal(answer.body.status, 'reset-sent');
    // a mail to a known address sent after it arrives; none for the unknown one by then
    const known = await makeUser(db, 'known');
    await client().post('/v1/auth/password/forgot', { email: known.email });
    await waitForMail(known.email, { subject: /new Fermiwell password/ });
    assert.equal((await mailsTo(nobody)).length, 0);
  });

  test('change password: needs the current one; other sessions end, this one stays', async () => {
    const user = await makeUser(db, 'changer');
    const here = client();
    const there = client();
    await here.signIn(user.email, user.password);
    await there.signIn(user.email, user.password);
    const wrong = await here.post('/v1/auth/password/change', { currentPassword: 'not it at all', newPassword: 'the next passphrase' });
    assert.equal(wrong.status, 403);
    assert.equal(wrong.body.type, '/problems/wrong-password');
    const ok = await here.post('/v1/auth/password/change', { currentPassword: user.password, newPassword: 'the next passphrase' });
    assert.equal(ok.status, 204);
    assert.equal((await here.get('/v1/me')).status, 200);
    assert.equal((await there.get('/v1/me')).status, 401);
    assert.equal((await client().signIn(user.email, 'the next passphrase')).status, 200);
  });
});

describe('invitations', () => {
  let owner: TestUser;
  let org: { id: string; name: string };
  let ownerClient: Client;

  before(async () => {
    owner = await makeUser(db, 'inviter');
    org = await makeOrganisation(db, [[owner, 'owner']], 'invites');
    ownerClient = client();
    await ownerClient.signIn(owner.email, owner.password);
  });

  test('accepted signed out: preview, sign up on the way, signed in as a member', async () => {
    const email = uniqueEmail('newcomer');
    const invited = await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email, role: 'developer' });
    assert.equal(invited.status, 201, JSON.stringify(invited.body));
    assert.equal(invited.body.role, 'developer');
    assert.equal(invited.body.state, 'pending');

    const mail = await waitForMail(email, { subject: /invited you to/ });
    assert.match(mail.subject, new RegExp(org.name));
    assert.match(mail.text, /with the role developer/);
    const token = tokenFrom(mail, 'join');

    const c = client();
    const preview = await c.post('/v1/invitations/preview', { token });
    assert.equal(preview.status, 200);
    assert.deepEqual(preview.body.organisation, { id: org.id, name: org.name });
    assert.equal(preview.body.email, email);
    assert.equal(preview.body.accountExists, false);

    const missing = await c.post('/v1/invitations/accept', { token });
    assert.equal(missing.status, 400);
    const accepted = await c.post('/v1/invitations/accept', { token, displayName: 'New Comer', password: 'my first passphrase' });
    assert.equal(accepted.status, 201, JSON.stringify(accepted.body));
    assert.equal(accepted.body.organisation.id, org.id);
    assert.equal(accepted.body.organisation.role, 'developer');
    assert.ok(accepted.body.accessToken);
    c.accessToken = accepted.body.accessToken;
    const me = await c.get('/v1/me');
    assert.equal(me.body.user.emailVerified, true, 'the invitation link proves the mailbox');
    assert.deepEqual(me.body.organisations.map((o: any) => [o.id, o.role]), [[org.id, 'developer']]);

    // the link is used up; the team sees the new member, not the invitation
    assert.equal((await client().post('/v1/invitations/accept', { token, displayName: 'X', password: 'another passphrase' })).status, 409);
    const members = await ownerClient.get(`/v1/organisations/${org.id}/members`);
    assert.ok(members.body.items.some((m: any) => m.user.email === email && m.role === 'developer'));
    const open = await ownerClient.get(`/v1/organisations/${org.id}/invitations`);
    assert.ok(!open.body.items.some((i: any) => i.email === email));
    // and it is all in the audit log
    const log = await ownerClient.get(`/v1/organisations/${org.id}/audit-log?action=invitation.*`);
    assert.ok(log.body.items.every((i: any) => i.action.startsWith('invitation.')));
    assert.ok(log.body.items.some((i: any) => i.action === 'invitation.accepted' && i.details.role === 'developer'));
  });

  test('accepted signed in, by the invited address only; an existing account must sign in', async () => {
    const invitee = await makeUser(db, 'colleague');
    const other = await makeUser(db, 'bystander');
    const invited = await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email: invitee.email, role: 'viewer' });
    assert.equal(invited.status, 201);
    const token = tokenFrom(await waitForMail(invitee.email, { subject: /invited you/ }), 'join');

    const preview = await client().post('/v1/invitations/preview', { token });
    assert.equal(preview.body.accountExists, true);
    const signedOut = await client().post('/v1/invitations/accept', { token, displayName: 'Impostor', password: 'some passphrase here' });
    assert.equal(signedOut.status, 401);
    assert.equal(signedOut.body.type, '/problems/sign-in-required');

    const wrong = client();
    await wrong.signIn(other.email, other.password);
    const mismatch = await wrong.post('/v1/invitations/accept', { token });
    assert.equal(mismatch.status, 403);
    assert.equal(mismatch.body.type, '/problems/invitation-email-mismatch');

    const right = client();
    await right.signIn(invitee.email, invitee.password);
    const accepted = await right.post('/v1/invitations/accept', { token });
    assert.equal(accepted.status, 200, JSON.stringify(accepted.body));
    assert.equal(accepted.body.organisation.role, 'viewer');
    const orgs = await right.get('/v1/organisations');
    assert.ok(orgs.body.items.some((o: any) => o.id === org.id && o.role === 'viewer'));
  });

  test('inviting again replaces the open invitation; a withdrawn one cannot be used', async () => {
    const email = uniqueEmail('twice');
    await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email, role: 'viewer' });
    const first = tokenFrom(await waitForMail(email, { subject: /invited you/ }), 'join');
    const second = await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email, role: 'maintainer' });
    const secondToken = tokenFrom(await waitForMail(email, { subject: /invited you/, count: 2 }), 'join');
    assert.equal((await client().post('/v1/invitations/preview', { token: first })).status, 404);
    const open = await ownerClient.get(`/v1/organisations/${org.id}/invitations`);
    assert.deepEqual(open.body.items.filter((i: any) => i.email === email).map((i: any) => i.role), ['maintainer']);

    assert.equal((await ownerClient.delete(`/v1/organisations/${org.id}/invitations/${second.body.id}`)).status, 204);
    const gone = await client().post('/v1/invitations/accept', { token: secondToken, displayName: 'Late', password: 'late passphrase!' });
    assert.equal(gone.status, 404);
    assert.equal(gone.body.type, '/problems/invitation-not-found');
  });

  test('an expired invitation says so', async () => {
    const email = uniqueEmail('late');
    const invited = await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email, role: 'viewer' });
    const token = tokenFrom(await waitForMail(email, { subject: /invited you/ }), 'join');
    await db('invitations').where({ id: invited.body.id }).update({ expires_at: db.raw("now() - interval '1 minute'") });
    const answer = await client().post('/v1/invitations/accept', { token, displayName: 'Late', password: 'late passphrase!' });
    assert.equal(answer.status, 410);
    assert.equal(answer.body.type, '/problems/invitation-expired');
    const listed = await ownerClient.get(`/v1/organisations/${org.id}/invitations`);
    assert.equal(listed.body.items.find((i: any) => i.id === invited.body.id).state, 'expired');
  });

  test('inviting a member is refused', async () => {
    const answer = await ownerClient.post(`/v1/organisations/${org.id}/invitations`, { email: owner.email, role: 'viewer' });
    assert.equal(answer.status, 409);
    assert.equal(answer.body.type, '/problems/already-member');
  });
});
