/**
 * Backup and restore of the project's database with PostgreSQL's own tools (README "Backups"):
 * `pg_dump --format=custom` of the test database, `pg_restore` into a fresh database, then the row
 * counts of the main tables match the dump's snapshot exactly, and a gateway started on the
 * restored database is ready, authenticates a key made before the dump and evaluates with it.
 *
 * The counts are read in the very snapshot pg_dump uses (pg_export_snapshot + --snapshot), so
 * other test files writing to the shared test database meanwhile cannot make them differ.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { createDb } from '../../gateway/db.js';
import { Fixtures } from '../support/fixtures.js';
import { startTestGateway, testDatabaseUrl } from '../support/gateway.js';
import { postJson } from '../support/api.js';
import { ensureDatabase, dropDatabase } from '../../scripts/lib/postgres.js';
import type { RunningGateway } from '../../gateway/server.js';

const TABLES = ['users', 'organisations', 'memberships', 'plans', 'api_keys', 'usage_minutes', 'sessions', 'audit_log', 'subscriptions', 'invoices', 'jobs', 'job_chunks', 'job_files', 'mixtures', 'knex_migrations', 'pgboss.job'];

/** Debian's client binaries (the newest installed server version). */
function pgBin(name: string): string {
  const root = '/usr/lib/postgresql';
  const versions = fs.readdirSync(root).filter((v) => fs.existsSync(path.join(root, v, 'bin', name))).sort((a, b) => Number(b) - Number(a));
  assert.ok(versions.length > 0, `${name} not found under ${root}`);
  return path.join(root, versions[0]!, 'bin', name);
}

const restoredName = `fermiwell_restore_${process.pid}`;
let workDir: string;
let fx: Fixtures;
let gateway: RunningGateway | undefined;

function adminUrl(): string {
  const url = process.env['TEST_PG_ADMIN_URL'];
  if (!url) throw new Error('TEST_PG_ADMIN_URL is not set: run through `npm test`.');
  return url;
}

before(() => {
  workDir = fs.mkdtempSync(path.join(os.tmpdir(), 'fermiwell-backup-'));
  fx = new Fixtures();
});
after(async () => {
  await gateway?.close();
  await fx.close();
  await dropDatabase(adminUrl(), restoredName).catch(() => undefined);
  fs.rmSync(workDir, { recursive: true, force: true });
});

test('pg_dump (custom format) → pg_restore into a fresh database: same row counts; a gateway on it authenticates a key and evaluates', async (t) => {
  const key = await fx.keyOnPlan('free');
  const dumpFile = path.join(workDir, 'fermiwell.dump');

  // one snapshot for the counts and the dump
  const source = new pg.Client({ connectionString: testDatabaseUrl() });
  await source.connect();
  const counts: Record<string, number> = {};
  let dumpMs = 0;
  try {
    await source.query('BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY');
    const { rows } = await source.query<{ id: string }>('SELECT pg_export_snapshot() AS id');
    for (const table of TABLES) counts[table] = Number((await source.query(`SELECT count(*) AS n FROM ${table}`)).rows[0].n);
    const started = Date.now();
    execFileSync(pgBin('pg_dump'), ['--format=custom', `--snapshot=${rows[0]!.id}`, `--file=${dumpFile}`, `--dbname=${testDatabaseUrl()}`], { stdio: ['ignore', 'pipe', 'pipe'] });
    dumpMs = Date.now() - started;
  } finally {
    await source.query('COMMIT').catch(() => undefined);
    await source.end();
  }
  assert.ok(counts['api_keys']! >= 1 && counts['plans'] === 3 && counts['knex_migrations']! > 0, JSON.stringify(counts));

  await dropDatabase(adminUrl(), restoredName);
  await ensureDatabase(adminUrl(), restoredName);
  const restoredUrl = new URL(testDatabaseUrl());
  restoredUrl.pathname = `/${restoredName}`;
  const started = Date.now();
  execFileSync(pgBin('pg_restore'), ['--no-owner', '--exit-on-error', `--dbname=${restoredUrl.href}`, dumpFile], { stdio: ['ignore', 'pipe', 'pipe'] });
  const restoreMs = Date.now() - started;

  const restored = createDb(restoredUrl.href, 2);
  try {
    const after: Record<string, number> = {};
    for (const table of TABLES) after[table] = Number((await restored.raw(`SELECT count(*) AS n FROM ${table}`)).rows[0].n);
    t.diagnostic(`dump ${(fs.statSync(dumpFile).size / 1024).toFixed(0)} KiB in ${dumpMs} ms, restore ${restoreMs} ms; rows ${JSON.stringify(counts)}`);
    assert.deepEqual(after, counts, 'every main table has the same rows after the restore');
    const keyRow = await restored('api_keys').where({ id: key.id }).first();
    assert.ok(keyRow, 'the key made before the dump is in the restored database');
  } finally {
    await restored.destroy();
  }

  gateway = await startTestGateway({ DATABASE_URL: restoredUrl.href, JOBS_IN_PROCESS_WORKER: 'false' });
  const ready = await fetch(`${gateway.url}/readyz`);
  assert.equal(ready.status, 200, 'schema current on the restored database');
  const answer = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density: [1e6], temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure'] });
  assert.equal(answer.status, 200, JSON.stringify(answer.body));
  assert.ok(answer.body.values.pressure[0] > 0, 'a pressure');
  const wrong = await postJson(`${gateway.url}/v1/eos/evaluate`, `${key.token.slice(0, -2)}xx`, { density: [1e6], temperature: 1e8, composition: { abar: 12, zbar: 6 } });
  assert.equal(wrong.status, 401, 'a wrong secret is refused on the restored database too');
});
