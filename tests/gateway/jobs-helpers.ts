/** Helpers shared by the jobs-*.test.ts and tables-*.test.ts files: uploads, waiting, CSV reading. */
import assert from 'node:assert/strict';
import { createHash } from 'node:crypto';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import type { RunningGateway } from '../../gateway/server.js';

export async function uploadJob(base: string, token: string, file: { name: string; content: string | Uint8Array; type?: string }, fields: Record<string, string> = {}, headers: Record<string, string> = {}) {
  const form = new FormData();
  const bytes = typeof file.content === 'string' ? new TextEncoder().encode(file.content) : file.content;
  form.append('file', new Blob([bytes], { type: file.type ?? 'text/csv' }), file.name);
  for (const [k, v] of Object.entries(fields)) form.append(k, v);
  const res = await fetch(`${base}/v1/jobs`, { method: 'POST', headers: { authorization: `Bearer ${token}`, ...headers }, body: form });
  const text = await res.text();
  let body: any = text;
  try {
    body = JSON.parse(text);
  } catch {
    // keep text
  }
  return { status: res.status, headers: res.headers, body };
}

export async function getJson(url: string, token: string, headers: Record<string, string> = {}) {
  const res = await fetch(url, { headers: { authorization: `Bearer ${token}`, ...headers } });
  return { status: res.status, headers: res.headers, body: (await res.json()) as any };
}

/** Polls GET until the job reaches a final state (a bounded wait, not a timing assertion). */
export async function waitForJob(url: string, token: string, options: { states?: string[]; timeoutMs?: number; headers?: Record<string, string> } = {}): Promise<any> {
  const states = options.states ?? ['completed', 'failed', 'cancelled'];
  const deadline = Date.now() + (options.timeoutMs ?? 60_000);
  for (;;) {
    const { status, body } = await getJson(url, token, options.headers);
    assert.equal(status, 200, JSON.stringify(body));
    if (states.includes(body.state)) return body;
    if (Date.now() > deadline) throw new Error(`job ${body.id} still ${body.state} (${body.chunksDone}/${body.chunksTotal}) after the wait`);
    // ≤ 4 polls a second: a Free plan key allows 10 requests a second, and tests send others meanwhile
    await new Promise((r) => setTimeout(r, 250));
  }
}

export async function download(url: string, token: string): Promise<{ status: number; bytes: Buffer; headers: Headers }> {
  const res = await fetch(url, { headers: { authorization: `Bearer ${token}` } });
  return { status: res.status, bytes: Buffer.from(await res.arrayBuffer()), headers: res.headers };
}

export const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/** Checks the RFC 9530 Repr-Digest header and the hex twin against the bytes. */
export function assertChecksum(bytes: Buffer, headers: Headers, expectedHex?: string) {
  const hex = sha256(bytes);
  assert.equal(headers.get('fermiwell-sha256'), hex);
  assert.equal(headers.get('repr-digest'), `sha-256=:${Buffer.from(hex, 'hex').toString('base64')}:`);
  if (expectedHex) assert.equal(expectedHex, hex);
}

export function parseCsv(text: string): { header: string[]; rows: string[][] } {
  const lines = text.trim().split('\n');
  return { header: lines[0]!.split(','), rows: lines.slice(1).map((l) => l.split(',')) };
}

/** A CSV column as numbers (empty cells → null). */
export function csvColumn(csv: { header: string[]; rows: string[][] }, name: string): Array<number | null> {
  const c = csv.header.indexOf(name);
  assert.ok(c >= 0, `column ${name} in ${csv.header.join(',')}`);
  return csv.rows.map((r) => (r[c] === '' ? null : Number(r[c])));
}

/**
 * A test gateway whose in-process worker runs batch jobs in chunks of `chunkPoints` (one EOS
 * thread, 0.5 s polls), and a Group-plan key that may evaluate and write jobs, with its
 * organisation owner's e-mail (the finished-job mail goes there).
 */
export async function startJobsGateway(chunkPoints: number): Promise<{
  gateway: RunningGateway; fx: Fixtures; key: TestKey & { org: { id: string; ownerId: string } }; ownerEmail: string; close(): Promise<void>;
}> {
  const gateway = await startTestGateway({ JOBS_CHUNK_POINTS: String(chunkPoints), JOBS_POLL_SECONDS: '0.5', EOS_POOL_MAX_THREADS: '1' });
  const fx = new Fixtures();
  const key = await fx.keyOnPlan('group', ['eos:evaluate', 'jobs:write']);
  const ownerEmail = (await fx.db('users').where({ id: key.org.ownerId }).first('email')).email;
  return { gateway, fx, key, ownerEmail, close: async () => { await gateway.close(); await fx.close(); } };
}
