/**
 * The demo group's people and keys (seeds/001–003, DESIGN.md §8) tell one story: each member's
 * "joined" time is the time of the audit log's entry that records it (organisation.created for the
 * owner, member.joined for the others), the roles the log records joining with and changing add up to
 * each member's role, the pending invitation lasts as long as one the gateway makes, and each demo
 * key's creation time is its key.created entry's.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Client } from '../support/accounts.js';
import { DEMO_KEYS, DEMO_ORGANISATION, DEMO_USERS } from '../../seeds/demo-accounts.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;

/** The seeds are separate statements, each with its own now(): their times agree to well within a minute. */
function assertSameMinute(a: string, b: string, what: string): void {
  assert.ok(Math.abs(Date.parse(a) - Date.parse(b)) < 60_000, `${what}: ${a} vs ${b}`);
}

before(async () => {
  gateway = await startTestGateway();
});
after(async () => {
  await gateway.close();
});

test('demo members joined when the audit log says they did, and the demo keys were made when it says so', async () => {
  const owner = DEMO_USERS.find((u) => u.role === 'owner')!;
  const client = new Client(gateway.url);
  assert.equal((await client.signIn(owner.email, owner.password)).status, 200);
  const orgs = await client.get('/v1/organisations');
  const org = orgs.body.items.find((o: { slug: string }) => o.slug === DEMO_ORGANISATION.slug);
  assert.ok(org, 'the demo group');
  const members = (await client.get(`/v1/organisations/${org.id}/members`)).body.items as Array<{ user: { id: string; email: string }; role: string; joinedAt: string }>;
  const audit = (await client.get(`/v1/organisations/${org.id}/audit-log?limit=100`)).body.items as Array<{ action: string; createdAt: string; target: { type: string; id: string } | null; details: Record<string, unknown> }>;
  for (const person of DEMO_USERS.filter((u) => u.role !== null)) {
    const member = members.find((m) => m.user.email === person.email);
    assert.ok(member, person.email);
    const entry = person.role === 'owner'
      ? audit.find((e) => e.action === 'organisation.created')
      : audit.find((e) => e.action === 'member.joined' && e.target?.id === member.user.id);
    assert.ok(entry, `the audit entry of ${person.email} joining`);
    assertSameMinute(member.joinedAt, entry.createdAt, person.email);
    // and not "today": the story happened weeks ago
    assert.ok(Date.now() - Date.parse(member.joinedAt) > 40 * 86_400_000, `${person.email} joined ${member.joinedAt}`);
  }
  // each member's role story adds up: the role they joined with, then every change from the role
  // held at the time, ends at the role they hold now
  for (const member of members) {
    const story = audit
      .filter((e) => e.target?.id === member.user.id && (e.action === 'member.joined' || e.action === 'member.role-changed'))
      .sort((a, b) => Date.parse(a.createdAt) - Date.parse(b.createdAt));
    let role = story[0]?.action === 'member.joined' ? (story[0].details['role'] as string) : 'owner';
    for (const change of story.filter((e) => e.action === 'member.role-changed')) {
      assert.equal(change.details['from'], role, `${member.user.email}: a change from ${String(change.details['from'])} while ${role}`);
      role = change.details['to'] as string;
    }
    assert.equal(role, member.role, `${member.user.email}: the audit log ends at ${role}`);
  }
  // the pending invitation is valid as long as one the gateway makes (INVITATION_TTL_DAYS, 7 by default)
  const invitations = (await client.get(`/v1/organisations/${org.id}/invitations`)).body.items as Array<{ email: string; createdAt: string; expiresAt: string }>;
  assert.ok(invitations.length > 0, 'the demo has a pending invitation');
  for (const invitation of invitations) {
    assertSameMinute(new Date(Date.parse(invitation.createdAt) + 7 * 86_400_000).toISOString(), invitation.expiresAt, invitation.email);
  }
  const keys = (await client.get(`/v1/organisations/${org.id}/keys`)).body.items as Array<{ id: string; createdAt: string }>;
  for (const demo of DEMO_KEYS) {
    const key = keys.find((k) => k.id === demo.id);
    assert.ok(key, demo.id);
    const entry = audit.find((e) => e.action === 'key.created' && e.target?.id === demo.id);
    assert.ok(entry, `the key.created entry of ${demo.id}`);
    assertSameMinute(key.createdAt, entry.createdAt, demo.id);
  }
});
