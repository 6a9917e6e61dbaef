/**
 * Jobs (issue 9, DESIGN.md §4 and §7): batch uploads and table builds, their files and the results
 * of each chunk, plus the pg-boss queue's own schema.
 *
 * - jobs          one row per batch job (kind 'batch') or table build (kind 'table'): who asked,
 *                 what (the request as JSON, with the composition already resolved), the state
 *                 machine queued → running → completed | failed | cancelled, and progress counters
 *                 (chunks_done, points_done) that workers advance in the same transaction that
 *                 stores a chunk's result.
 * - job_chunks    one row per chunk of a batch job: its input columns (float64 little-endian,
 *                 column after column) and, once computed, its result (same layout) and per-point
 *                 status. The primary key (job_id, chunk_index) and the "result IS NULL" guard on
 *                 the write make a retried chunk unable to add a second result.
 * - job_files     uploads and results (CSV, HDF5 batch results, HDF5 tables) stored in PostgreSQL
 *                 as bytea with their SHA-256 (hex) and size; downloads send the checksum in a
 *                 `Digest`-style header so clients can check them.
 *
 * The queue: pg-boss 10 keeps its tables in its own schema `pgboss` (JOB_QUEUE_SCHEMA in
 * gateway/jobs/queue.ts). It is created here, with the queues, so every gateway and worker that
 * starts finds it ready and none of them races another creating it (this migration runs outside
 * a transaction because pg-boss's construction script has its own BEGIN/COMMIT).
 */
import type { Knex } from 'knex';
import PgBoss from 'pg-boss';

export const config = { transaction: false };

/** Kept in step with gateway/jobs/queue.ts (a migration must not import gateway code that may change). */
const BOSS_SCHEMA = 'pgboss';
const QUEUES = ['fw-job-chunk', 'fw-job-chunk-dead', 'fw-table-build', 'fw-table-build-dead'];

export async function up(knex: Knex) {
  await knex.schema.createTable('jobs', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.text('kind').notNullable().checkIn(['batch', 'table']);
    t.text('name').notNullable();
    t.text('state').notNullable().defaultTo('queued').checkIn(['queued', 'running', 'completed', 'failed', 'cancelled']);
    t.uuid('created_by').references('users.id').onDelete('SET NULL').comment('the signed-in person, or the creator of the API key used');
    t.text('api_key_id').comment('the API key that submitted it (null from the dashboard)');
    t.jsonb('request').notNullable().comment('operation, resolved composition, method, components, fields; tables: grid and mixture');
    t.bigInteger('points').notNullable().defaultTo(0).comment('states to evaluate (tables: grid nodes)');
    t.integer('chunk_points').notNullable().defaultTo(0);
    t.integer('chunks_total').notNullable().defaultTo(0);
    t.integer('chunks_done').notNullable().defaultTo(0);
    t.bigInteger('points_done').notNullable().defaultTo(0);
    t.double('progress').notNullable().defaultTo(0).comment('0..1; for tables set by the builder');
    t.jsonb('result').comment('batch: status counts; table: accuracy report and grid');
    t.text('error').comment('why it failed, in words');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('started_at', { useTz: true });
    t.timestamp('finished_at', { useTz: true });
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['organisation_id', 'kind', 'created_at']);
  });

  await knex.schema.createTable('job_chunks', (t) => {
    t.uuid('job_id').notNullable().references('jobs.id').onDelete('CASCADE');
    t.integer('chunk_index').notNullable();
    t.bigInteger('first_point').notNullable();
    t.integer('points').notNullable();
    t.uuid('queue_job_id').notNullable().comment('the pg-boss job that carries this chunk (cancel uses it)');
    t.binary('input').notNullable().comment('float64 LE columns of request.inputColumns, one after the other');
    t.binary('result').comment('float64 LE columns of request.outputColumns; null until computed');
    t.binary('status').comment('one status byte per point');
    t.integer('attempts').notNullable().defaultTo(0);
    t.text('worker').comment('host:pid of the worker that stored the result');
    t.double('compute_ms');
    t.timestamp('finished_at', { useTz: true });
    t.primary(['job_id', 'chunk_index']);
  });

  await knex.schema.createTable('job_files', (t) => {
    t.uuid('id').primary().defaultTo(knex.fn.uuid());
    t.uuid('organisation_id').notNullable().references('organisations.id').onDelete('CASCADE');
    t.uuid('job_id').references('jobs.id').onDelete('CASCADE');
    t.text('role').notNullable().checkIn(['upload', 'result-csv', 'result-hdf5', 'table-hdf5']);
    t.text('file_name').notNullable();
    t.text('content_type').notNullable();
    t.bigInteger('size_bytes').notNullable();
    t.text('sha256').notNullable().comment('hex SHA-256 of content');
    t.binary('content').notNullable();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(['job_id', 'role']);
  });

  const installed = await knex.raw(`SELECT to_regclass('${BOSS_SCHEMA}.version') AS t`);
  if (!installed.rows[0].t) await knex.raw(PgBoss.getConstructionPlans(BOSS_SCHEMA));
  for (const name of QUEUES) {
    await knex.raw(`SELECT ${BOSS_SCHEMA}.create_queue(?, ?::json)`, [name, JSON.stringify({ policy: 'standard' })]);
  }
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('job_files');
  await knex.schema.dropTableIfExists('job_chunks');
  await knex.schema.dropTableIfExists('jobs');
  await knex.raw(`DROP SCHEMA IF EXISTS ${BOSS_SCHEMA} CASCADE`);
}
