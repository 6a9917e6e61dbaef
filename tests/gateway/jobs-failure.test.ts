/**
 * A job whose chunks keep failing ends as failed, not stuck: here every chunk asks for the table
 * method on a worker that has no table (EOS_TABLE_PATH empty), so each attempt fails; after
 * JOBS_CHUNK_RETRIES retries the chunk reaches the dead-letter queue, the job is marked failed with
 * the reason, its creator is mailed, and nothing is metered.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, bearer, type TestKey } from '../support/fixtures.js';
import { expectProblem } from '../support/api.js';
import { waitForMail } from '../support/mail.js';
import type { RunningGateway } from '../../gateway/server.js';
import { uploadJob, waitForJob } from './jobs-helpers.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string; ownerId: string } };

before(async () => {
  gateway = await startTestGateway({ EOS_TABLE_PATH: '', JOBS_CHUNK_RETRIES: '1', JOBS_POLL_SECONDS: '0.5', JOBS_MAINTENANCE_SECONDS: '1', EOS_POOL_MAX_THREADS: '1' });
  fx = new Fixtures();
  key = await fx.keyOnPlan('group', ['jobs:write']);
});
after(async () => {
  await gateway.close();
  await fx.close();
});

test('a chunk that fails on every attempt fails its job, with the reason and a mail', async () => {
  const created = await uploadJob(gateway.url, key.token, { name: 'needs-a-table.csv', content: 'density,temperature\n1e3,1e7\n1e4,1e8\n' }, { composition: '{"mixture":"he4"}', method: 'table' });
  assert.equal(created.status, 201, JSON.stringify(created.body));
  const job = await waitForJob(`${gateway.url}/v1/jobs/${created.body.id}`, key.token, { timeoutMs: 60_000 });
  assert.equal(job.state, 'failed');
  assert.match(job.error, /failed 2 times/);
  assert.match(job.error, /table/);
  const chunk = await fx.db('job_chunks').where({ job_id: job.id }).first('attempts', 'result');
  assert.equal(chunk.attempts, 2);
  assert.equal(chunk.result, null);
  const owner = await fx.db('users').where({ id: key.org.ownerId }).first('email');
  const mail = await waitForMail(owner.email, { subject: /failed/ });
  assert.ok(mail.text.includes(job.id));
  await expectProblem(await fetch(`${gateway.url}/v1/jobs/${job.id}/results?format=hdf5`, { headers: bearer(key.token) }), 409, 'results-not-ready');
  assert.equal((await fx.usage(key.org.id)).get('/v1/jobs')?.points ?? 0, 0);
});
