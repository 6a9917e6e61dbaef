/**
 * Standalone workers (`npm run worker` = scripts/worker.ts under tsx) sharing the PostgreSQL queue
 * with a gateway that runs no worker of its own:
 * - cancel: a queued job is cancelled, its queue messages too, and no worker computes it;
 * - two worker processes share one job: both compute chunks, the result is complete, in order and
 *   without duplicates (every point once in the file and once in the metered usage);
 * - a worker killed (SIGKILL) in the middle of a chunk loses nothing: the chunk expires, is retried
 *   by another worker, and the job completes with the same numbers as POST /v1/eos/invert.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, bearer, type TestKey } from '../support/fixtures.js';
import { expectProblem } from '../support/api.js';
import type { RunningGateway } from '../../gateway/server.js';
import { csvColumn, download, parseCsv, uploadJob, waitForJob } from './jobs-helpers.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string } };
const started: ChildProcess[] = [];
let workerA: ChildProcess | undefined;

const QUEUE_ENV = { JOBS_POLL_SECONDS: '0.5', JOBS_MAINTENANCE_SECONDS: '1' };

before(async () => {
  gateway = await startTestGateway({
    JOBS_IN_PROCESS_WORKER: 'false',
    JOBS_CHUNK_EXPIRE_SECONDS: '5',
    JOBS_CHUNK_POINTS: '100',
    EOS_POOL_MAX_THREADS: '1',
    ...QUEUE_ENV,
  });
  fx = new Fixtures();
  key = await fx.keyOnPlan('group', ['eos:evaluate', 'jobs:write']);
});
after(async () => {
  for (const child of started) {
    if (child.exitCode === null && child.signalCode === null) {
      child.kill('SIGCONT');
      child.kill('SIGTERM');
      await exited(child);
    }
  }
  await gateway.close();
  await fx.close();
});

/** Starts `node --import tsx scripts/worker.ts` and waits for its "ready" line. */
async function startWorker(name: string): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(root, 'scripts', 'worker.ts')], {
    cwd: root,
    env: { ...process.env, ...QUEUE_ENV, JOBS_WORKER_NAME: name, JOBS_WORKER_CONCURRENCY: '1', EOS_POOL_MAX_THREADS: '1', LOG_LEVEL: 'warn' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  started.push(child);
  let output = '';
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker ${name} did not start: ${output}`)), 60_000);
    child.stdout!.on('data', (b: Buffer) => {
      output += b;
      if (output.includes(`worker ${name} ready`)) {
        clearTimeout(timer);
        resolve();
      }
    });
    child.stderr!.on('data', (b: Buffer) => (output += b));
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`worker ${name} exited with ${code}: ${output}`));
    });
  });
  return child;
}

function exited(child: ChildProcess): Promise<number | null> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve(child.exitCode);
  return new Promise((resolve) => child.once('exit', (code) => resolve(code)));
}

/** Density–energy states (inversions: each point costs several evaluations, so chunks take a while). */
function inverseStates(n: number) {
  const density: number[] = [];
  const specificEnergy: number[] = [];
  for (let i = 0; i < n; i++) {
    density.push(10 ** (1 + (7 * i) / n));
    specificEnergy.push(10 ** (14.5 + ((i * 13) % n) * (3 / n)));
  }
  return { density, specificEnergy, csv: ['density,specificEnergy', ...density.map((d, i) => `${d},${specificEnergy[i]}`)].join('\n') };
}

const FIELDS = 'temperature,pressure,specificEntropy';
const COMPOSITION = JSON.stringify({ mixture: 'he4' });

async function submit(n: number, name: string) {
  const states = inverseStates(n);
  const created = await uploadJob(gateway.url, key.token, { name, content: states.csv }, { composition: COMPOSITION, fields: FIELDS });
  assert.equal(created.status, 201, JSON.stringify(created.body));
  return { ...states, job: created.body };
}

/** The job's CSV against POST /v1/eos/invert of the same points: every point once, in order, same numbers. */
async function checkAgainstInvert(jobView: any, states: { density: number[]; specificEnergy: number[] }) {
  const csv = parseCsv((await download(`${gateway.url}${jobView.files.csv.url}`, key.token)).bytes.toString('utf8'));
  assert.equal(csv.rows.length, states.density.length);
  assert.deepEqual(csvColumn(csv, 'density'), states.density);
  assert.deepEqual(csvColumn(csv, 'specificEnergy'), states.specificEnergy);
  const res = await fetch(`${gateway.url}/v1/eos/invert`, {
    method: 'POST',
    headers: bearer(key.token),
    body: JSON.stringify({ density: states.density, specificEnergy: states.specificEnergy, composition: { mixture: 'he4' }, fields: FIELDS.split(',') }),
  });
  assert.equal(res.status, 200);
  const direct = (await res.json()) as { values: Record<string, Array<number | null>> };
  for (const f of FIELDS.split(',')) assert.deepEqual(csvColumn(csv, f), direct.values[f], f);
}

async function meteredJobPoints(): Promise<number> {
  return (await fx.usage(key.org.id)).get('/v1/jobs')?.points ?? 0;
}

async function waitForMetered(points: number) {
  const deadline = Date.now() + 15_000;
  let now = 0;
  while (Date.now() < deadline) {
    now = await meteredJobPoints();
    if (now >= points) break;
    await new Promise((r) => setTimeout(r, 200));
  }
  // settle: a duplicate would arrive within one more flush
  await new Promise((r) => setTimeout(r, 1500));
  assert.equal(await meteredJobPoints(), points);
}

test('cancel: a queued job and its queue messages are cancelled; nothing is computed', async () => {
  const { job } = await submit(300, 'to-cancel.csv');
  assert.equal(job.state, 'queued');
  const res = await fetch(`${gateway.url}/v1/jobs/${job.id}/cancel`, { method: 'POST', headers: bearer(key.token) });
  assert.equal(res.status, 200);
  const cancelled = (await res.json()) as any;
  assert.equal(cancelled.state, 'cancelled');
  const states = await fx.db('pgboss.job').where({ name: 'fw-job-chunk' }).whereRaw("data->>'jobId' = ?", [job.id]).pluck('state');
  assert.deepEqual([...new Set(states)], ['cancelled']);
  assert.equal(states.length, 3);
  await expectProblem(await fetch(`${gateway.url}/v1/jobs/${job.id}/cancel`, { method: 'POST', headers: bearer(key.token) }), 409, 'job-not-active');
  await expectProblem(await fetch(`${gateway.url}/v1/jobs/${job.id}/results?format=csv`, { headers: bearer(key.token) }), 409, 'results-not-ready');
});

test('two standalone workers share one job: complete, in order, no duplicates', async () => {
  const [a, b] = await Promise.all([startWorker('worker-a'), startWorker('worker-b')]);
  workerA = a;
  const n = 800; // 8 chunks of 100 inversions
  const { job, ...states } = await submit(n, 'shared.csv');
  const done = await waitForJob(`${gateway.url}/v1/jobs/${job.id}`, key.token, { timeoutMs: 120_000 });
  assert.equal(done.state, 'completed', done.error);
  assert.equal(done.chunksDone, 8);
  const workers = await fx.db('job_chunks').where({ job_id: job.id }).pluck('worker');
  assert.equal(workers.length, 8);
  assert.deepEqual([...new Set(workers)].sort(), ['worker-a', 'worker-b'], 'both processes computed chunks');
  await checkAgainstInvert(done, states);
  await waitForMetered(n);
  // the cancelled job of the first test was never computed by them
  assert.equal(await fx.db('job_chunks').whereNotNull('job_chunks.result').join('jobs', 'jobs.id', 'job_chunks.job_id').where('jobs.state', 'cancelled').count({ n: '*' }).first().then((r) => Number(r!.n)), 0);
  // graceful stop on SIGTERM (worker-a stays for the next test)
  b.kill('SIGTERM');
  assert.equal(await exited(b), 0);
});

test('a worker killed in the middle of a chunk loses nothing: the chunk is retried elsewhere', async () => {
  const before = await meteredJobPoints();
  // worker-a is paused, so the victim is the only worker taking chunks
  assert.ok(workerA, 'worker-a from the previous test');
  workerA.kill('SIGSTOP');
  const victim = await startWorker('worker-victim');
  const n = 600; // 6 chunks
  const { job, ...states } = await submit(n, 'survives.csv');
  // wait until the victim has taken a chunk and not stored its result yet, then kill it hard
  let taken: { chunk_index: number } | undefined;
  const deadline = Date.now() + 60_000;
  while (!taken && Date.now() < deadline) {
    taken = await fx.db('job_chunks').where({ job_id: job.id }).where('attempts', '>=', 1).whereNull('result').first('chunk_index');
    if (!taken) await new Promise((r) => setTimeout(r, 10));
  }
  assert.ok(taken, 'the victim took a chunk');
  victim.kill('SIGKILL');
  await exited(victim);
  const stored = await fx.db('job_chunks').where({ job_id: job.id, chunk_index: taken.chunk_index }).first('result');
  assert.equal(stored.result, null, 'killed before it stored the chunk');

  workerA.kill('SIGCONT');
  const done = await waitForJob(`${gateway.url}/v1/jobs/${job.id}`, key.token, { timeoutMs: 120_000 });
  assert.equal(done.state, 'completed', done.error);
  const retried = await fx.db('job_chunks').where({ job_id: job.id, chunk_index: taken.chunk_index }).first('attempts', 'worker');
  assert.ok(retried.attempts >= 2, `the chunk was taken again (attempts ${retried.attempts})`);
  assert.equal(retried.worker, 'worker-a');
  await checkAgainstInvert(done, states);
  await waitForMetered(before + n);
});
