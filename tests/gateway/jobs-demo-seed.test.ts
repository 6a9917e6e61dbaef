/**
 * The demo group's seeded batch job and table build (seeds/005_demo-jobs.ts, DESIGN.md §8) are
 * real: the batch's results equal POST /v1/eos/evaluate of its own upload today, its files match
 * their checksums, and the table file is a readable Fermiwell table with its accuracy report.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startTestGateway } from '../support/gateway.js';
import { bearer } from '../support/fixtures.js';
import { DEMO_KEYS, demoToken } from '../../seeds/demo-accounts.js';
import { readTableWithInfo } from '../../eos-tables/table-file.js';
import type { RunningGateway } from '../../gateway/server.js';
import { assertChecksum, csvColumn, download, getJson, parseCsv } from './jobs-helpers.js';

let gateway: RunningGateway;
const token = demoToken(DEMO_KEYS[0]);

before(async () => {
  gateway = await startTestGateway({ JOBS_IN_PROCESS_WORKER: 'false', EOS_POOL_MAX_THREADS: '1' });
});
after(async () => {
  await gateway.close();
});

test('the seeded batch job\'s results equal evaluate of its own upload', async () => {
  const { status, body } = await getJson(`${gateway.url}/v1/jobs`, token);
  assert.equal(status, 200);
  const job = body.items.find((j: any) => j.name === 'helium-shell-track.csv');
  assert.ok(job, 'the demo batch job');
  assert.equal(job.state, 'completed');
  // its times are those of a real run of 16 states (seconds, not a minute per step)
  const took = Date.parse(job.finishedAt) - Date.parse(job.startedAt);
  assert.ok(took >= 1000 && took <= 5000, `the demo batch ran ${took} ms`);
  const upload = await download(`${gateway.url}${job.files.upload.url}`, token);
  assertChecksum(upload.bytes, upload.headers, job.files.upload.sha256);
  const states = parseCsv(upload.bytes.toString('utf8').split('\n').filter((l) => !l.startsWith('#')).join('\n'));
  const density = csvColumn(states, 'density') as number[];
  const temperature = csvColumn(states, 'temperature') as number[];
  const results = await download(`${gateway.url}${job.files.csv.url}`, token);
  assertChecksum(results.bytes, results.headers, job.files.csv.sha256);
  const csv = parseCsv(results.bytes.toString('utf8'));
  const res = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: bearer(token), body: JSON.stringify({ density, temperature, composition: { mixture: 'he4' } }) });
  const direct = (await res.json()) as { values: Record<string, Array<number | null>> };
  for (const f of Object.keys(direct.values)) assert.deepEqual(csvColumn(csv, f), direct.values[f], f);
  assert.equal(job.result.computed, density.length);
});

test('the seeded table build is a Fermiwell table with its accuracy report and the He-4 ion terms', async () => {
  const { body } = await getJson(`${gateway.url}/v1/tables`, token);
  const build = body.items.find((j: any) => j.state === 'completed');
  assert.ok(build, 'the demo table build');
  const { bytes, headers } = await download(`${gateway.url}${build.files.table.url}`, token);
  assertChecksum(bytes, headers, build.files.table.sha256);
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'fw-demo-table-')), 'demo.h5');
  fs.writeFileSync(file, bytes);
  try {
    const { table } = await readTableWithInfo(file);
    assert.equal(table.nD * table.nT, build.points);
    assert.ok(table.accuracy && table.accuracy.cellCentres > 0);
    assert.equal(build.result.accuracy.maxRelativeError, Math.max(...['pressure', 'energy', 'entropy'].map((q) => table.accuracy!.quantities[q]!.max)));
    // built as a user's build would be (the pair-onset band on): it meets the table's accuracy goal (PHYSICS.md §7: P, e, s ≤ 1e-6)
    assert.ok(build.result.accuracy.maxRelativeError <= 1e-6, `the demo table's largest error ${build.result.accuracy.maxRelativeError}`);
  } finally {
    fs.rmSync(path.dirname(file), { recursive: true, force: true });
  }
});
