/** A batch job to have in flight while a gateway is stopped or killed, and the checks that it lost nothing. */
import assert from 'node:assert/strict';
import type { Knex } from 'knex';
import { csvColumn, download, parseCsv, uploadJob, waitForJob } from '../../gateway/jobs-helpers.js';
import type { Fixtures } from '../../support/fixtures.js';
import { startGatewayProcess, type GatewayProcess } from './gateway-process.js';
import { steadyLoad } from './steady-load.js';

/** Job settings for the gateways of the fault tests: small chunks, quick expiry and polling. */
export const JOB_ENV = {
  JOBS_CHUNK_POINTS: '100',
  JOBS_CHUNK_EXPIRE_SECONDS: '4',
  JOBS_MAINTENANCE_SECONDS: '1',
  JOBS_POLL_SECONDS: '0.5',
};

/** Density–energy states: inversions, so each chunk of 100 takes a noticeable time. */
export function inverseStates(n: number) {
  const density: number[] = [];
  const specificEnergy: number[] = [];
  for (let i = 0; i < n; i++) {
    density.push(10 ** (1 + (7 * i) / n));
    specificEnergy.push(10 ** (14.5 + ((i * 13) % n) * (3 / n)));
  }
  return { density, specificEnergy, csv: ['density,specificEnergy', ...density.map((d, i) => `${d},${specificEnergy[i]}`)].join('\n') };
}

/**
 * The start of both fault scenarios: a gateway process (added to `gateways` for clean-up) with a
 * job of `jobStates` states in flight and a steady load of `points`-point evaluations, once the job
 * has stored its first chunk. `loadStarted` is when the load began (Date.now()).
 */
export async function startJobUnderLoad(fx: Fixtures, gateways: GatewayProcess[], jobStates: number, points: number) {
  const key = await fx.keyOnPlan('group', ['eos:evaluate', 'jobs:write']);
  const first = await startGatewayProcess(JOB_ENV);
  gateways.push(first);
  const { id: jobId, states } = await submitJob(first.url, key.token, jobStates);
  const load = steadyLoad({ url: () => first.url, token: key.token, loopers: 4, pauseMs: 5, points });
  const loadStarted = Date.now();
  await waitForChunks(fx.db, jobId, 1);
  return { key, first, jobId, states, load, loadStarted };
}

export async function submitJob(url: string, token: string, n: number) {
  const states = inverseStates(n);
  const created = await uploadJob(url, token, { name: `faults-${n}.csv`, content: states.csv }, { composition: JSON.stringify({ mixture: 'he4' }), fields: 'temperature,pressure' });
  assert.equal(created.status, 201, JSON.stringify(created.body));
  return { id: created.body.id as string, states };
}

export async function chunksStored(db: Knex, jobId: string): Promise<number> {
  const row = await db('job_chunks').where({ job_id: jobId }).whereNotNull('result').count({ n: '*' }).first();
  return Number(row?.n ?? 0);
}

/** Waits (bounded) until at least `count` chunks of the job are stored. */
export async function waitForChunks(db: Knex, jobId: string, count: number, timeoutMs = 60_000): Promise<number> {
  const deadline = Date.now() + timeoutMs;
  let stored = 0;
  while ((stored = await chunksStored(db, jobId)) < count && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
  assert.ok(stored >= count, `job ${jobId}: ${stored} chunk(s) stored, waited for ${count}`);
  return stored;
}

/** The job completes on the given gateway with every state once and in order. */
export async function expectCompleteJob(url: string, token: string, jobId: string, states: { density: number[] }) {
  const done = await waitForJob(`${url}/v1/jobs/${jobId}`, token, { timeoutMs: 120_000 });
  assert.equal(done.state, 'completed', done.error);
  assert.equal(done.chunksDone, done.chunksTotal);
  const csv = parseCsv((await download(`${url}${done.files.csv.url}`, token)).bytes.toString('utf8'));
  assert.deepEqual(csvColumn(csv, 'density'), states.density, 'every state once, in order');
  const temperatures = csvColumn(csv, 'temperature');
  assert.equal(temperatures.length, states.density.length);
  return done;
}

/** Points metered for the key's jobs so far. */
export async function jobPointsMetered(db: Knex, keyId: string): Promise<number> {
  const row = await db('usage_minutes').where({ api_key_id: keyId, endpoint: '/v1/jobs' }).sum({ p: 'points' }).first();
  return Number(row?.p ?? 0);
}

/** Usage rows of a key on the evaluation endpoint. */
export async function evaluationUsage(db: Knex, keyId: string) {
  const row = await db('usage_minutes').where({ api_key_id: keyId, endpoint: '/v1/eos/evaluate' }).sum({ requests: 'requests', points: 'points', errors: 'errors' }).first();
  return { requests: Number(row?.requests ?? 0), points: Number(row?.points ?? 0), errors: Number(row?.errors ?? 0) };
}
