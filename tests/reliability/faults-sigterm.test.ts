/**
 * SIGTERM during load loses nothing: a gateway process (the production entry, gateway/server.ts)
 * under a steady stream of evaluations and with a batch job in flight on its in-process worker is
 * sent SIGTERM. It stops accepting connections, finishes what it took, flushes the meter and exits 0.
 * Then every answered request (200 or 429) is in usage_minutes — no more, no less — and a second
 * gateway finishes the job with every state once and meters its points exactly once.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { Fixtures } from '../support/fixtures.js';
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

test('SIGTERM under load: answered requests = recorded requests; the job in flight finishes on the next gateway', async (t) => {
  const { key, first, jobId, states, load, loadStarted } = await startJobUnderLoad(fx, gateways, JOB_STATES, POINTS);
  await new Promise((r) => setTimeout(r, Math.max(0, loadStarted + 1_500 - Date.now())));
  const storedAtSignal = await chunksStored(fx.db, jobId);
  assert.ok(storedAtSignal < JOB_STATES / 100, 'the job is still in flight when the signal comes');
  const answeredBefore = load.answered.length;
  first.child.kill('SIGTERM');
  const { code } = await first.exited;
  await load.stop();
  assert.equal(code, 0, `graceful exit:\n${first.output()}`);

  const answered = load.answered;
  const ok = answered.filter((a) => a.status === 200).length;
  const limited = answered.filter((a) => a.status === 429).length;
  assert.equal(ok + limited, answered.length, `only 200 and 429 answers: ${JSON.stringify([...new Set(answered.map((a) => a.status))])}`);
  assert.ok(answeredBefore >= 10, `load was running (${answeredBefore} answers before the signal)`);
  const usage = await evaluationUsage(fx.db, key.id);
  t.diagnostic(`SIGTERM: ${answered.length} answered (${ok} × 200, ${limited} × 429), ${load.connectionErrors} refused connections after the close; recorded ${usage.requests} requests, ${usage.points} points; job chunks stored at the signal ${storedAtSignal}, after the exit ${await chunksStored(fx.db, jobId)}`);
  assert.deepEqual(usage, { requests: answered.length, points: ok * POINTS, errors: limited }, 'no usage lost, none invented');

  const second = await startGatewayProcess(JOB_ENV);
  gateways.push(second);
  await expectCompleteJob(second.url, key.token, jobId, states);
  await second.stop();
  assert.equal(await jobPointsMetered(fx.db, key.id), JOB_STATES, 'the job is metered exactly once');
});
