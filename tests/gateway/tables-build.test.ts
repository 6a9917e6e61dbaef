/**
 * Table builds end to end: a small grid requested through POST /v1/tables (with a fixed mixture
 * for the ion and Coulomb terms), built by the gateway's worker, downloaded with its checksum, read
 * back with the project's own reader (eos-tables/table-file.ts) and by Debian's `h5dump` (an
 * independent HDF5 implementation, package hdf5-tools); the accuracy report in the API; the plan's
 * table builds per month (Free: 1, DESIGN.md §6); grid validation; GraphQL.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, bearer, type TestKey } from '../support/fixtures.js';
import { expectProblem, graphql } from '../support/api.js';
import { readTableWithInfo } from '../../eos-tables/table-file.js';
import { nodeLogDensityYe, nodeLogTemperature } from '../../eos/free-energy-table.js';
import type { RunningGateway } from '../../gateway/server.js';
import { assertChecksum, download, waitForJob } from './jobs-helpers.js';
import { tableFileName } from '../../gateway/tables/runner.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string } };
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'fw-tables-test-'));

// 11 × 9 nodes: log10 ρYe ∈ [4, 6], log10 T ∈ [7, 8.6], 5 points per decade, a uniform T axis
const GRID = { logDensityYeMin: 4, logDensityYeMax: 6, logTemperatureMin: 7, logTemperatureMax: 8.6, pointsPerDecade: 5, refinedTemperature: null };

before(async () => {
  gateway = await startTestGateway({ JOBS_POLL_SECONDS: '0.5', EOS_POOL_MAX_THREADS: '1' });
  fx = new Fixtures();
  key = await fx.keyOnPlan('free', ['eos:evaluate', 'jobs:write']);
  // the Free plan's table-build allowance is what these tests probe, not its 10 requests per second:
  // lift only the rate (an operator override, migration 007), so polling a build is never rate-limited
  await fx.db('organisation_limit_overrides').insert({ organisation_id: key.org.id, requests_per_second: 1000, reason: 'test: polling table builds' });
});
after(async () => {
  await gateway.close();
  await fx.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

const post = (body: unknown, token = key.token) => fetch(`${gateway.url}/v1/tables`, { method: 'POST', headers: bearer(token), body: JSON.stringify(body) });

test('grids the builder cannot take are refused before anything counts', async () => {
  await expectProblem(await post({ grid: { ...GRID, logTemperatureMin: 2 } }), 422, 'invalid-grid');
  await expectProblem(await post({ grid: { ...GRID, logDensityYeMax: 6.05 } }), 422, 'invalid-grid');
  await expectProblem(await post({ grid: { ...GRID, logDensityYeMin: -15, logDensityYeMax: 15, logTemperatureMin: 3, logTemperatureMax: 13, pointsPerDecade: 100 } }), 422, 'invalid-grid');
  await expectProblem(await post({ grid: { logDensityYeMin: 4 } }), 400, 'invalid-request');
  await expectProblem(await post({ grid: GRID, composition: { mixture: 'unobtainium' } }), 422, 'invalid-composition');
  const count = await fx.db('jobs').where({ organisation_id: key.org.id }).count({ n: '*' }).first();
  assert.equal(Number(count!.n), 0);
});

test('a table file is named in ASCII, in the words of its own grid (density_ye), never a mangled ρ', () => {
  // the default name of a build (gateway/tables/service.ts)
  assert.equal(tableFileName('table ρYe 1e4–1e8, T 1e7–1e10'), 'table_density_ye_1e4-1e8_T_1e7-1e10.h5');
  assert.equal(tableFileName('table ρYe 1e-12–1e15, T 1e3–1e13'), 'table_density_ye_1e-12-1e15_T_1e3-1e13.h5');
  assert.equal(tableFileName('ρ·Ye grid for the shell'), 'density_ye_grid_for_the_shell.h5');
  assert.equal(tableFileName('he-shell grid.h5'), 'he-shell_grid.h5');
  assert.equal(tableFileName('★★'), 'table.h5');
});

test('a small table is built, downloaded with its checksum, read back and read by h5dump', async () => {
  const res = await post({ name: 'he-shell grid', grid: GRID, composition: { mixture: 'he4' } });
  assert.equal(res.status, 201);
  const created = (await res.json()) as any;
  assert.equal(created.kind, 'table');
  assert.equal(created.points, 11 * 9);
  const job = await waitForJob(`${gateway.url}/v1/tables/${created.id}`, key.token, { timeoutMs: 180_000 });
  assert.equal(job.state, 'completed', job.error);
  // the accuracy report of the builder, in the API
  const accuracy = job.result.accuracy;
  assert.ok(accuracy.cellCentres > 0 && accuracy.randomPoints > 0);
  assert.ok(Number.isFinite(accuracy.maxRelativeError) && accuracy.maxRelativeError >= 0);
  assert.ok(accuracy.quantities.pressure.max >= accuracy.quantities.pressure.median);

  const { status, bytes, headers } = await download(`${gateway.url}${job.files.table.url}`, key.token);
  assert.equal(status, 200);
  assert.equal(headers.get('content-type'), 'application/x-hdf5');
  assertChecksum(bytes, headers, job.files.table.sha256);
  assert.equal(job.files.table.fileName, 'he-shell_grid.h5');
  assert.match(headers.get('content-disposition') ?? '', /filename="he-shell_grid\.h5"/);
  const file = path.join(dir, 'table.h5');
  fs.writeFileSync(file, bytes);

  // read back with the project's reader: the grid asked for, the same accuracy report
  const { table, info } = await readTableWithInfo(file);
  assert.deepEqual([table.nD, table.nT], [11, 9]);
  assert.equal(table.grid.pointsPerDecadeDensity, 5);
  assert.equal(nodeLogTemperature(table.grid, 8), 8.6);
  assert.equal(table.accuracy!.quantities['pressure']!.max, accuracy.quantities.pressure.max);
  assert.equal(info.buildParameters['job_id'], job.id);

  // Debian's h5dump (hdf5-tools) reads the same file: attributes, grid and the mixture group
  const header = execFileSync('h5dump', ['-H', file], { encoding: 'utf8' });
  for (const name of ['format', 'accuracy_report', 'log_density_ye', 'free_energy', 'ions_coulomb', 'specific_entropy']) assert.ok(header.includes(name), `h5dump shows ${name}`);
  const grid = execFileSync('h5dump', ['-d', '/grid/log_density_ye', '-m', '%.6f', file], { encoding: 'utf8' });
  const values = [...grid.matchAll(/-?\d+\.\d{6}/g)].map((m) => Number(m[0]));
  assert.deepEqual(values, Array.from({ length: 11 }, (_, i) => Number(nodeLogDensityYe(table.grid, i).toFixed(6))));
  const ye = execFileSync('h5dump', ['-a', '/ions_coulomb/ye', file], { encoding: 'utf8' });
  // He-4: Z/A = 2/4 (common practice)
  assert.match(ye, /\b0\.5\b/);

  // the ion + Coulomb pressure of the file equals evaluate's, component by component (one node)
  const ionP = execFileSync('h5dump', ['-d', '/ions_coulomb/pressure[3,4;;1,1;1,1]', '-m', '%.17g', file], { encoding: 'utf8' });
  const stored = Number(/\(3,4\):\s*([-\d.e+]+)/.exec(ionP)![1]);
  const rho = 10 ** nodeLogDensityYe(table.grid, 3) / 0.5;
  const T = 10 ** nodeLogTemperature(table.grid, 4);
  const direct = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: bearer(key.token), body: JSON.stringify({ density: [rho], temperature: [T], composition: { mixture: 'he4' }, components: ['ions', 'coulomb'], fields: ['pressure'] }) });
  const body = (await direct.json()) as any;
  assert.ok(Math.abs(stored - body.values.pressure[0]) <= 1e-12 * Math.abs(body.values.pressure[0]), `${stored} vs ${body.values.pressure[0]}`);
});

test('the Free plan includes one table build a month', async () => {
  const res = await post({ grid: GRID });
  const problem = await expectProblem(res, 429, 'table-build-limit');
  assert.equal(problem['tableBuildsPerMonth'], 1);
  // the plan by its name, in words that agree with the counts
  assert.match(String(problem['detail']), /^The Free plan includes 1 table build a month, and 1 was requested this period\. Nothing was queued\./);
});

test('GraphQL lists the build with its grid and accuracy', async () => {
  const answer = await graphql(gateway.url, key.token, `query($o: ID!) { jobs(organisationId: $o, kind: TABLE) { id kind state grid { pointsPerDecadeDensity logTemperatureMax } accuracy { maxRelativeError quantities { name max } } files { role sha256 } } }`, { o: key.org.id });
  assert.equal(answer.body.errors, undefined, JSON.stringify(answer.body.errors));
  const [t] = answer.body.data!.jobs;
  assert.equal(t.kind, 'TABLE');
  assert.equal(t.state, 'completed');
  assert.deepEqual(t.grid, { pointsPerDecadeDensity: 5, logTemperatureMax: 8.6 });
  assert.ok(t.accuracy.quantities.some((q: any) => q.name === 'pressure'));
  assert.equal(t.files[0].role, 'table');
});
