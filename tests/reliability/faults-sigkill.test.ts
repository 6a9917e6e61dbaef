/**
 * SIGKILL of the gateway under load loses at most the documented flush interval of usage
 * (gateway/usage/meter.ts: FLUSH_INTERVAL_MS, counts live in memory between flushes) and no job
 * results: the chunk its in-process worker held expires (JOBS_CHUNK_EXPIRE_SECONDS) and the next
 * gateway computes it, finishing the job with every state once.
 *
 * The bound is checked against the client's record of answers: the answered requests missing from
 * usage_minutes must not outnumber the answers that arrived in the last flush interval before the
 * kill, plus FLUSH_SLACK_MS for the flush's own transaction and timer lag on a busy machine.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { Fixtures } from '../support/fixtures.js';
import { FLUSH_INTERVAL_MS } from '../../gateway/usage/meter.js';
import { startGatewayProcess, type GatewayProcess } from './support/gateway-process.js';
import { JOB_ENV, chunksStored, evaluationUsage, expectCompleteJob, jobPointsMetered, startJobUnderLoad } from './support/jobs.js';

let fx: Fixtures;
const gateways: GatewayProcess[] = [];

before(() => {
  fx = new Fixtures();
});
after(async () => {
  for (const g of gateways) await g.stop();
  await fx.close();
});

const POINTS = 2;
const JOB_STATES = 1_200;
const FLUSH_SLACK_MS = 500;

test('SIGKILL under load: usage lost ≤ one flush interval of answers; the job resumes on the next gateway', async (t) => {
  const { key, first, jobId, states, load, loadStarted } = await startJobUnderLoad(fx, gateways, JOB_STATES, POINTS);
  // at least two flush intervals of load, and a random phase against the flush timer
  await new Promise((r) => setTimeout(r, Math.max(0, loadStarted + 2 * FLUSH_INTERVAL_MS - Date.now()) + Math.random() * FLUSH_INTERVAL_MS));
  const killedAt = Date.now();
  first.child.kill('SIGKILL');
  const { signal } = await first.exited;
  await load.stop();
  assert.equal(signal, 'SIGKILL');
  const storedAtKill = await chunksStored(fx.db, jobId);
  // chunks the dead gateway had taken (attempts counted on taking) but not stored: they must be taken again
  const held: number[] = await fx.db('job_chunks').where({ job_id: jobId }).whereNull('result').andWhere('attempts', '>=', 1).pluck('chunk_index');
  assert.ok(storedAtKill < JOB_STATES / 100, 'the job was in flight when the gateway died');

  const answered = load.answered;
  const ok = answered.filter((a) => a.status === 200).length;
  assert.ok(answered.length >= 20, `load was running (${answered.length} answers)`);
  const usage = await evaluationUsage(fx.db, key.id);
  const lost = answered.length - usage.requests;
  const inLastInterval = answered.filter((a) => a.at > killedAt - FLUSH_INTERVAL_MS - FLUSH_SLACK_MS).length;
  // the shortest time before the kill whose answers cover what was lost
  const sorted = answered.map((a) => a.at).sort((a, b) => b - a);
  const lossWindowMs = lost > 0 ? killedAt - sorted[lost - 1]! : 0;
  t.diagnostic(`SIGKILL: ${answered.length} answered (${ok} × 200) at ~${Math.round(answered.length / ((answered.at(-1)!.at - answered[0]!.at) / 1000))}/s; recorded ${usage.requests}; lost ${lost} = the answers of the last ${lossWindowMs} ms (flush interval ${FLUSH_INTERVAL_MS} ms; ${inLastInterval} answers in the last ${FLUSH_INTERVAL_MS + FLUSH_SLACK_MS} ms)`);
  assert.ok(usage.requests <= answered.length + load.connectionErrors, 'nothing invented');
  assert.ok(lost >= 0, `recorded ${usage.requests} > answered ${answered.length}`);
  assert.ok(lost <= inLastInterval, `lost ${lost} answered requests, more than the ${inLastInterval} answered in the last ${FLUSH_INTERVAL_MS + FLUSH_SLACK_MS} ms`);
  assert.ok(usage.points <= ok * POINTS && usage.points >= (ok - lost) * POINTS, 'points of served requests only');

  const second = await startGatewayProcess(JOB_ENV);
  gateways.push(second);
  const done = await expectCompleteJob(second.url, key.token, jobId, states);
  const attempts: number[] = await fx.db('job_chunks').where({ job_id: jobId }).pluck('attempts');
  await second.stop();
  const metered = await jobPointsMetered(fx.db, key.id);
  // chunks the dead gateway stored within the last flush interval (+ slack) may be unmetered, none twice
  const recent = await fx.db('job_chunks')
    .where({ job_id: jobId })
    .andWhere('worker', 'like', `%:${first.child.pid}`)
    .andWhere('finished_at', '>', new Date(killedAt - FLUSH_INTERVAL_MS - FLUSH_SLACK_MS))
    .sum({ p: 'points' })
    .first();
  const mayBeUnmetered = Number(recent?.p ?? 0);
  t.diagnostic(`job: ${storedAtKill}/${done.chunksTotal} chunks stored at the kill, completed on the next gateway; chunk attempts ${JSON.stringify(attempts)}; job points metered ${metered} of ${JOB_STATES} (${mayBeUnmetered} stored by the dead gateway in its last ${FLUSH_INTERVAL_MS + FLUSH_SLACK_MS} ms)`);
  // the kill can land between two chunks (none held); when it landed inside one, that one ran again
  const attemptsOf = new Map<number, number>((await fx.db('job_chunks').where({ job_id: jobId }).select('chunk_index', 'attempts')).map((r: { chunk_index: number; attempts: number }) => [r.chunk_index, r.attempts]));
  t.diagnostic(`chunks held by the dead gateway at the kill: ${JSON.stringify(held)}`);
  for (const index of held) assert.ok(attemptsOf.get(index)! >= 2, `chunk ${index}, held by the dead gateway, was taken again`);
  assert.ok(metered <= JOB_STATES, `job points metered ${metered}: never twice`);
  assert.ok(JOB_STATES - metered <= mayBeUnmetered, `unmetered job points ${JOB_STATES - metered} > ${mayBeUnmetered} stored in the last flush interval`);
});
