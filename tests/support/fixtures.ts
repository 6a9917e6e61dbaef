/**
 * Test fixtures against the real test database: an organisation on a given plan, its owner, and
 * API keys with given scopes and expiry, created through the product's own KeyService (so the
 * tokens are real). Every name is unique, so test files can run in any order and in parallel.
 */
import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { createDb } from '../../gateway/db.js';
import { KeyService } from '../../gateway/keys/service.js';
import type { Scope } from '../../gateway/keys/types.js';
import { LATENCY_BOUNDS_MS } from '../../gateway/usage/latency-buckets.js';
import { testDatabaseUrl } from './gateway.js';

export type PlanId = 'free' | 'group' | 'facility';

export interface TestOrganisation {
  id: string;
  slug: string;
  plan: PlanId;
  ownerId: string;
}

export interface TestKey {
  id: string;
  token: string;
  organisationId: string;
}

export class Fixtures {
  readonly db: Knex;
  readonly keys: KeyService;

  constructor(db?: Knex) {
    this.db = db ?? createDb(testDatabaseUrl(), 4);
    this.keys = new KeyService(this.db);
  }

  /** A unique short tag for names. */
  static tag(): string {
    return randomUUID().slice(0, 8);
  }

  async organisation(plan: PlanId = 'free', label = 'test'): Promise<TestOrganisation> {
    const tag = Fixtures.tag();
    const [user] = await this.db('users')
      .insert({
        email: `owner-${tag}@tests.fermiwell.invalid`,
        display_name: `Owner ${tag}`,
        // not a valid password hash: fixture users never sign in
        password_hash: '!',
        email_verified_at: this.db.fn.now(),
      })
      .returning('id');
    const slug = `${label}-${tag}`.toLowerCase().replace(/[^a-z0-9-]/g, '-');
    const [org] = await this.db('organisations').insert({ name: `Test group ${tag}`, slug, plan_id: plan }).returning('id');
    await this.db('memberships').insert({ user_id: user.id, organisation_id: org.id, role: 'owner' });
    return { id: org.id, slug, plan, ownerId: user.id };
  }

  async key(org: TestOrganisation, options: { scopes?: Scope[]; expiresAt?: Date | null; name?: string } = {}): Promise<TestKey> {
    const created = await this.keys.create({
      organisationId: org.id,
      name: options.name ?? `key ${Fixtures.tag()}`,
      scopes: options.scopes ?? ['eos:evaluate'],
      createdBy: org.ownerId,
      expiresAt: options.expiresAt ?? null,
    });
    return { id: created.id, token: created.token, organisationId: org.id };
  }

  /** An organisation on `plan` with one key (scope eos:evaluate unless told). */
  async keyOnPlan(plan: PlanId = 'free', scopes: Scope[] = ['eos:evaluate']): Promise<TestKey & { org: TestOrganisation }> {
    const org = await this.organisation(plan);
    const key = await this.key(org, { scopes });
    return { ...key, org };
  }

  /** Pretends the organisation already used `points` this period (one usage row, this minute). */
  async seedUsage(organisationId: string, points: number, apiKeyId = ''): Promise<void> {
    await this.db('usage_minutes').insert({
      organisation_id: organisationId,
      api_key_id: apiKeyId,
      endpoint: 'seeded',
      minute: new Date(Math.floor(Date.now() / 60_000) * 60_000),
      requests: 1,
      points,
      errors: 0,
      latency_ms_sum: 0,
      latency_buckets: new Array(LATENCY_BOUNDS_MS.length).fill(0),
    });
  }

  /**
   * One usage_minutes row as the meter would write it: `buckets` maps latency-bucket index (see
   * usage/latency-buckets.ts) to a count; their sum should equal `requests`.
   */
  async seedUsageRow(row: { organisationId: string; apiKeyId?: string; endpoint: string; minute: Date; requests: number; points: number; errors?: number; buckets: Partial<Record<number, number>> }): Promise<void> {
    const counts = new Array<number>(LATENCY_BOUNDS_MS.length).fill(0);
    for (const [i, n] of Object.entries(row.buckets)) counts[Number(i)] = n ?? 0;
    await this.db('usage_minutes').insert({
      organisation_id: row.organisationId,
      api_key_id: row.apiKeyId ?? '',
      endpoint: row.endpoint,
      minute: row.minute,
      requests: row.requests,
      points: row.points,
      errors: row.errors ?? 0,
      latency_ms_sum: 0,
      latency_buckets: counts,
    });
  }

  /** Usage rows of an organisation, summed per endpoint (excluding seeded rows). */
  async usage(organisationId: string): Promise<Map<string, { requests: number; points: number; errors: number }>> {
    const rows = await this.db('usage_minutes')
      .where('organisation_id', organisationId)
      .whereNot('endpoint', 'seeded')
      .groupBy('endpoint')
      .select('endpoint')
      .sum({ requests: 'requests', points: 'points', errors: 'errors' });
    return new Map(rows.map((r: Record<string, unknown>) => [String(r['endpoint']), { requests: Number(r['requests']), points: Number(r['points']), errors: Number(r['errors']) }]));
  }

  async close(): Promise<void> {
    await this.keys.close();
    await this.db.destroy();
  }
}

/** Headers for a JSON call with a key. */
export function bearer(token: string, extra: Record<string, string> = {}): Record<string, string> {
  return { authorization: `Bearer ${token}`, 'content-type': 'application/json', ...extra };
}
