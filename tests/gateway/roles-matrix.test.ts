/**
 * The whole role × action matrix (DESIGN.md §2, issue 6) over the real API, table-driven: every
 * action for every kind of caller — the four organisation roles, an operator who is not a member,
 * and a signed-in outsider — allowed or denied as the table below says. The table is written here
 * from the specification, independently of gateway/shared/roles.ts, and the test also checks that
 * the two agree row by row.
 *
 * Actions whose feature has no route yet (usage series, mixtures, billing, plans, evaluation
 * from the dashboard) are checked through GET /v1/organisations/{id}/permissions, the caller's
 * effective permissions as the services compute them; when those features land, their rows get a
 * probe of the real route here.
 *
 * Also: the membership rules beyond the matrix (the last owner stays; anyone may leave).
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { Client, makeUser, tag, uniqueEmail, type TestUser } from '../support/accounts.js';
import { createDb } from '../../gateway/db.js';
import { matrix, PLATFORM_ACTIONS, type Action } from '../../gateway/shared/roles.js';
import { KeyService } from '../../gateway/keys/service.js';
import type { RunningGateway } from '../../gateway/server.js';

// x = allowed, . = denied. "outsider" is signed in but neither a member nor an operator.
const EXPECTED = `
action                      viewer developer maintainer owner operator outsider
organisation.read              x       x         x        x      x       .
members.read                   x       x         x        x      x       .
usage.read                     x       x         x        x      x       .
keys.read                      x       x         x        x      x       .
mixtures.read                  x       x         x        x      x       .
jobs.read                      x       x         x        x      x       .
billing.read                   x       x         x        x      x       .
eos.evaluate                   .       x         x        x      .       .
keys.create                    .       x         x        x      .       .
keys.manage-own                .       x         x        x      .       .
keys.manage-any                .       .         x        x      .       .
jobs.create                    .       x         x        x      .       .
jobs.manage                    .       .         x        x      .       .
mixtures.manage                .       .         x        x      .       .
invitations.read               .       .         x        x      x       .
members.invite.viewer          .       .         x        x      .       .
members.invite.developer       .       .         x        x      .       .
members.invite.maintainer      .       .         .        x      .       .
members.invite.owner           .       .         .        x      .       .
members.manage                 .       .         .        x      .       .
audit.read                     .       .         x        x      x       .
billing.manage                 .       .         .        x      .       .
organisation.rename            .       .         .        x      .       .
organisation.delete            .       .         .        x      .       .
plans.manage                   .       .         .        .      x       .
organisations.list-all         .       .         .        .      x       .
platform.health                .       .         .        .      x       .
`;

type Who = 'viewer' | 'developer' | 'maintainer' | 'owner' | 'operator' | 'outsider';
const WHO: Who[] = ['viewer', 'developer', 'maintainer', 'owner', 'operator', 'outsider'];
const MEMBER_ROLES = ['viewer', 'developer', 'maintainer', 'owner'] as const;

const rows = EXPECTED.trim()
  .split('\n')
  .slice(1)
  .map((line) => {
    const [action, ...marks] = line.trim().split(/\s+/);
    return { action: action!, allowed: Object.fromEntries(WHO.map((w, i) => [w, marks[i] === 'x'])) as Record<Who, boolean> };
  });

let gateway: RunningGateway;
let db: Knex;
let keyService: KeyService;
const users = {} as Record<Who, TestUser>;
const clients = {} as Record<Who, Client>;
/** A developer whose keys are "someone else's" for everybody else. */
let colleague: TestUser;
let shared: string;

async function organisationWithEveryone(label: string): Promise<string> {
  const [org] = await db('organisations').insert({ name: `Matrix ${label} ${tag()}`, slug: `matrix-${label}-${tag()}` }).returning('id');
  for (const role of MEMBER_ROLES) await db('memberships').insert({ user_id: users[role].id, organisation_id: org.id, role });
  await db('memberships').insert({ user_id: colleague.id, organisation_id: org.id, role: 'developer' });
  return org.id;
}

async function keyCreatedBy(orgId: string, user: TestUser): Promise<string> {
  return (await keyService.create({ organisationId: orgId, name: `made for ${user.displayName}`, scopes: ['eos:evaluate'], createdBy: user.id })).id;
}

async function throwawayMember(orgId: string, role: 'viewer' | 'developer' = 'viewer'): Promise<TestUser> {
  const user = await makeUser(db, 'throwaway');
  await db('memberships').insert({ user_id: user.id, organisation_id: orgId, role });
  return user;
}

/** Whether the permissions route says the caller may do `action` (404 = not even visible). */
async function permitted(who: Who, orgId: string, action: string): Promise<number> {
  const answer = await clients[who].get(`/v1/organisations/${orgId}/permissions`);
  if (answer.status !== 200) return answer.status;
  return answer.body.actions.includes(action) ? 200 : 403;
}

type Probe = (who: Who) => Promise<number[]>;

/** For each action: what a caller does through the API to exercise it; the statuses it got. */
const PROBES: Record<string, Probe> = {
  'organisation.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}`)).status],
  'members.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}/members`)).status],
  'keys.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}/keys`)).status, (await clients[who].get(`/v1/organisations/${shared}/keys/${await keyCreatedBy(shared, colleague)}`)).status],
  'keys.create': async (who) => [(await clients[who].post(`/v1/organisations/${shared}/keys`, { name: `by ${who}` })).status],
  'keys.manage-own': async (who) => {
    const key = await keyCreatedBy(shared, users[who]);
    return [(await clients[who].post(`/v1/organisations/${shared}/keys/${key}/rotate`)).status, (await clients[who].post(`/v1/organisations/${shared}/keys/${key}/revoke`)).status];
  },
  'keys.manage-any': async (who) => {
    const key = await keyCreatedBy(shared, colleague);
    return [(await clients[who].post(`/v1/organisations/${shared}/keys/${key}/rotate`)).status, (await clients[who].post(`/v1/organisations/${shared}/keys/${key}/revoke`)).status];
  },
  'invitations.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}/invitations`)).status],
  'members.manage': async (who) => {
    const a = await throwawayMember(shared);
    const b = await throwawayMember(shared);
    return [
      (await clients[who].patch(`/v1/organisations/${shared}/members/${a.id}`, { role: 'developer' })).status,
      (await clients[who].delete(`/v1/organisations/${shared}/members/${b.id}`)).status,
    ];
  },
  'audit.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}/audit-log`)).status],
  'organisation.rename': async (who) => [(await clients[who].patch(`/v1/organisations/${shared}`, { name: `Renamed by ${who} ${tag()}` })).status],
  'organisation.delete': async (who) => [(await clients[who].delete(`/v1/organisations/${await organisationWithEveryone('delete')}`)).status],
  'organisations.list-all': async (who) => [(await clients[who].get('/v1/organisations?all=true')).status],
  'billing.read': async (who) => [(await clients[who].get(`/v1/organisations/${shared}/billing`)).status, (await clients[who].get(`/v1/organisations/${shared}/billing/invoices`)).status],
  // choosing the plan the organisation is on: allowed = 200 with nothing to change
  'billing.manage': async (who) => [(await clients[who].call('PUT', `/v1/organisations/${shared}/billing/plan`, { plan: 'free' })).status],
  'platform.health': async (who) => [(await clients[who].get('/v1/operator/health')).status],
  // the Operator page's limit change (a plan move of the shared organisation back to where it was)
  'plans.manage': async (who) => [(await clients[who].call('PUT', `/v1/operator/organisations/${shared}/limits`, { plan: 'free', reason: `matrix probe by ${who}` })).status],
};
for (const role of MEMBER_ROLES) {
  PROBES[`members.invite.${role}`] = async (who) => {
    // inviting, and withdrawing an invitation of that role (one the owner sent)
    const sent = await clients[who].post(`/v1/organisations/${shared}/invitations`, { email: uniqueEmail('invitee'), role });
    const byOwner = await clients.owner.post(`/v1/organisations/${shared}/invitations`, { email: uniqueEmail('invitee'), role });
    assert.equal(byOwner.status, 201);
    return [sent.status, (await clients[who].delete(`/v1/organisations/${shared}/invitations/${byOwner.body.id}`)).status];
  };
}
// jobs (gateway/jobs, gateway/tables): list; submit a one-state upload; cancel a colleague's queued job
PROBES['jobs.read'] = async (who) => [(await clients[who].get(`/v1/jobs?organisationId=${shared}`)).status, (await clients[who].get(`/v1/tables?organisationId=${shared}`)).status];
PROBES['jobs.create'] = async (who) => {
  const form = new FormData();
  form.append('file', new Blob(['density,temperature\n1,1e6\n'], { type: 'text/csv' }), 'one.csv');
  form.append('composition', '{"mixture":"he4"}');
  const res = await fetch(`${gateway.url}/v1/jobs?organisationId=${shared}`, { method: 'POST', headers: { authorization: `Bearer ${clients[who].accessToken}`, 'x-forwarded-for': clients[who].ip }, body: form });
  return [res.status];
};
PROBES['jobs.manage'] = async (who) => {
  const [job] = await db('jobs').insert({ organisation_id: shared, kind: 'batch', name: `colleague's job ${tag()}`, created_by: colleague.id, request: JSON.stringify({}) }).returning('id');
  return [(await clients[who].post(`/v1/jobs/${job.id}/cancel?organisationId=${shared}`)).status];
};
// not yet a route of their own: the effective permissions
for (const action of ['usage.read', 'mixtures.read', 'eos.evaluate', 'mixtures.manage']) {
  PROBES[action] = async (who) => [await permitted(who, shared, action)];
}

before(async () => {
  gateway = await startTestGateway();
  db = createDb(testDatabaseUrl(), 3);
  keyService = new KeyService(db);
  for (const who of WHO) {
    users[who] = await makeUser(db, `matrix-${who}`, { platformRole: who === 'operator' ? 'operator' : null });
    clients[who] = new Client(gateway.url);
    assert.equal((await clients[who].signIn(users[who].email, users[who].password)).status, 200);
  }
  colleague = await makeUser(db, 'matrix-colleague');
  shared = await organisationWithEveryone('shared');
});
after(async () => {
  await keyService.close();
  await gateway.close();
  await db.destroy();
});

test('the expected table and gateway/shared/roles.ts agree on every row and column', () => {
  const actual = matrix();
  assert.deepEqual(actual.map((r) => r.action).sort(), rows.map((r) => r.action).sort());
  for (const row of rows) {
    const a = actual.find((r) => r.action === row.action)!;
    for (const who of WHO.filter((w) => w !== 'outsider')) assert.equal(a.allowed[who as Exclude<Who, 'outsider'>], row.allowed[who], `${row.action} × ${who}`);
  }
});

describe('every cell over the real API', () => {
  for (const row of rows) {
    for (const who of WHO) {
      const expected = row.allowed[who];
      test(`${row.action} × ${who}: ${expected ? 'allowed' : 'denied'}`, async () => {
        const probe = PROBES[row.action];
        assert.ok(probe, `a probe for ${row.action}`);
        const statuses = await probe(who);
        for (const status of statuses) {
          if (expected) assert.ok(status >= 200 && status < 300, `${row.action} × ${who}: expected success, got ${statuses.join(', ')}`);
          // platform actions name no organisation: an outsider is refused (403), not kept from seeing one (404)
          else if (who === 'outsider' && !PLATFORM_ACTIONS.includes(row.action as Action)) assert.equal(status, 404, `outsiders do not even see the organisation (${statuses.join(', ')})`);
          else assert.equal(status, 403, `${row.action} × ${who}: expected 403, got ${statuses.join(', ')}`);
        }
      });
    }
  }
});

describe('denials explain themselves', () => {
  test('403 problem names the action and the role', async () => {
    const answer = await clients.viewer.post(`/v1/organisations/${shared}/keys`, { name: 'nope' });
    assert.equal(answer.status, 403);
    assert.equal(answer.body.type, '/problems/forbidden');
    assert.equal(answer.body.action, 'keys.create');
    assert.equal(answer.body.role, 'viewer');
    assert.match(answer.body.detail, /viewer/);
    const other = await clients.developer.post(`/v1/organisations/${shared}/keys/${await keyCreatedBy(shared, colleague)}/revoke`);
    assert.equal(other.body.action, 'keys.manage-any');
    assert.match(other.body.detail, /only the keys you created/);
  });
});

describe('membership rules beyond the matrix', () => {
  test('the last owner can be neither demoted, removed nor leave; with a second owner they can', async () => {
    const orgId = await organisationWithEveryone('owners');
    const owner = clients.owner;
    const me = users.owner.id;
    for (const answer of [
      await owner.patch(`/v1/organisations/${orgId}/members/${me}`, { role: 'maintainer' }),
      await owner.delete(`/v1/organisations/${orgId}/members/${me}`),
    ]) {
      assert.equal(answer.status, 409);
      assert.equal(answer.body.type, '/problems/last-owner');
    }
    assert.equal((await owner.patch(`/v1/organisations/${orgId}/members/${users.maintainer.id}`, { role: 'owner' })).status, 200);
    assert.equal((await owner.patch(`/v1/organisations/${orgId}/members/${me}`, { role: 'maintainer' })).status, 200);
    // now the former maintainer is the only owner, and the same rule protects them
    const former = clients.maintainer;
    assert.equal((await former.delete(`/v1/organisations/${orgId}/members/${users.maintainer.id}`)).body.type, '/problems/last-owner');
    const members = (await former.get(`/v1/organisations/${orgId}/members`)).body.items;
    assert.deepEqual(members.filter((m: any) => m.role === 'owner').map((m: any) => m.user.id), [users.maintainer.id]);
    const log = await former.get(`/v1/organisations/${orgId}/audit-log?action=member.role-changed`);
    assert.equal(log.body.items.length, 2);
    assert.deepEqual(log.body.items[0].details, { from: 'owner', to: 'maintainer' });
  });

  test('any member may leave; then the organisation is gone for them', async () => {
    const orgId = await organisationWithEveryone('leave');
    assert.equal((await clients.viewer.delete(`/v1/organisations/${orgId}/members/${users.viewer.id}`)).status, 204);
    assert.equal((await clients.viewer.get(`/v1/organisations/${orgId}`)).status, 404);
    const log = await clients.owner.get(`/v1/organisations/${orgId}/audit-log?action=member.left`);
    assert.equal(log.body.items[0].actor.id, users.viewer.id);
  });

  test('a deleted organisation keeps its audit record, and its keys stop working', async () => {
    const orgId = await organisationWithEveryone('gone');
    const created = await clients.developer.post(`/v1/organisations/${orgId}/keys`, { name: 'dies with it' });
    assert.equal((await clients.owner.delete(`/v1/organisations/${orgId}`)).status, 204);
    const row = await db('audit_log').where({ organisation_id: orgId, action: 'organisation.deleted' }).first();
    assert.equal(row.actor_user_id, users.owner.id);
    const res = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: { authorization: `Bearer ${created.body.token}`, 'content-type': 'application/json' }, body: '{}' });
    assert.equal(res.status, 401);
  });
});
