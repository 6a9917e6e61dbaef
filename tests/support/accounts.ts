/**
 * Helpers for the account tests: an HTTP client that behaves like the dashboard (JSON, the access
 * token in memory, the refresh cookie kept per client), verified users made straight in the test
 * database (for tests about something other than sign-up), and unique addresses so test files can
 * run in any order and in parallel.
 *
 * Each client presents its own invented client address through X-Forwarded-For (the gateway trusts
 * that header from loopback only), so per-IP sign-in limits of one test never count another's
 * attempts. The addresses come from 198.18.0.0/15, the range reserved for benchmarks (RFC 2544).
 */
import { randomInt, randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { hash } from '@node-rs/argon2';

export const tag = () => randomUUID().slice(0, 8);
export const uniqueEmail = (label: string) => `${label}-${tag()}@tests.fermiwell.invalid`;
export const fakeClientIp = () => `198.${18 + randomInt(2)}.${randomInt(256)}.${1 + randomInt(254)}`;

export interface Answer {
  status: number;
  body: any;
  headers: Headers;
}

export class Client {
  accessToken: string | null = null;
  refreshCookie: string | null = null;
  organisationId: string | null = null;
  readonly ip: string;

  constructor(readonly base: string, ip = fakeClientIp()) {
    this.ip = ip;
  }

  async call(method: string, path: string, body?: unknown, options: { headers?: Record<string, string>; auth?: boolean; cookie?: boolean } = {}): Promise<Answer> {
    const headers: Record<string, string> = { 'x-forwarded-for': this.ip, accept: 'application/json', ...(options.headers ?? {}) };
    if (body !== undefined) headers['content-type'] ??= 'application/json';
    if (options.auth !== false && this.accessToken) headers['authorization'] ??= `Bearer ${this.accessToken}`;
    if (options.cookie !== false && this.refreshCookie) headers['cookie'] = `fermiwell_refresh=${this.refreshCookie}`;
    if (this.organisationId) headers['fermiwell-organisation'] ??= this.organisationId;
    const res = await fetch(this.base + path, { method, headers, ...(body !== undefined ? { body: typeof body === 'string' ? body : JSON.stringify(body) } : {}) });
    const text = await res.text();
    let parsed: any = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      // not JSON: keep the text
    }
    const cookie = refreshCookieOf(res.headers);
    if (cookie !== undefined) this.refreshCookie = cookie.value || null;
    return { status: res.status, body: parsed, headers: res.headers };
  }

  get = (path: string, options?: Parameters<Client['call']>[3]) => this.call('GET', path, undefined, options);
  post = (path: string, body?: unknown, options?: Parameters<Client['call']>[3]) => this.call('POST', path, body ?? {}, options);
  patch = (path: string, body?: unknown, options?: Parameters<Client['call']>[3]) => this.call('PATCH', path, body ?? {}, options);
  delete = (path: string, options?: Parameters<Client['call']>[3]) => this.call('DELETE', path, undefined, options);

  async signIn(email: string, password: string): Promise<Answer> {
    const answer = await this.post('/v1/auth/session', { email, password });
    if (answer.status === 200) this.accessToken = answer.body.accessToken;
    return answer;
  }

  async refresh(): Promise<Answer> {
    const answer = await this.post('/v1/auth/session/refresh', {}, { auth: false });
    if (answer.status === 200) this.accessToken = answer.body.accessToken;
    return answer;
  }

  async graphql(query: string, variables: Record<string, unknown> = {}): Promise<{ data: any; errors?: any[]; status: number }> {
    const answer = await this.post('/graphql', { query, variables });
    return { data: answer.body?.data, errors: answer.body?.errors, status: answer.status };
  }
}

/** The fermiwell_refresh cookie set by a response (value '' when it was cleared), with its attributes. */
export function refreshCookieOf(headers: Headers): { value: string; attributes: string } | undefined {
  for (const line of headers.getSetCookie()) {
    const match = /^fermiwell_refresh=([^;]*)(.*)$/.exec(line);
    if (match) return { value: decodeURIComponent(match[1]!), attributes: match[2]! };
  }
  return undefined;
}

export interface TestUser {
  id: string;
  email: string;
  password: string;
  displayName: string;
}

/** A verified user made directly in the database (argon2 hash as the product makes it). */
export async function makeUser(db: Knex, label: string, options: { platformRole?: 'operator' | null; verified?: boolean } = {}): Promise<TestUser> {
  const email = uniqueEmail(label);
  const password = `pw-${tag()}-${tag()}`;
  const displayName = `${label[0]!.toUpperCase()}${label.slice(1)} ${tag().slice(0, 4)}`;
  const [row] = await db('users')
    .insert({ email, display_name: displayName, password_hash: await hash(password), email_verified_at: options.verified === false ? null : db.fn.now(), platform_role: options.platformRole ?? null })
    .returning('id');
  return { id: row.id, email, password, displayName };
}

/** An organisation with the given members (role per user), made directly in the database. */
export async function makeOrganisation(db: Knex, members: Array<[TestUser, 'owner' | 'maintainer' | 'developer' | 'viewer']>, label = 'org'): Promise<{ id: string; name: string }> {
  const name = `Test ${label} ${tag()}`;
  const [org] = await db('organisations').insert({ name, slug: `${label}-${tag()}`.toLowerCase() }).returning('id');
  for (const [user, role] of members) await db('memberships').insert({ user_id: user.id, organisation_id: org.id, role });
  return { id: org.id, name };
}
