/**
 * Per-point physics warnings of batch jobs: each chunk's result is stored with one warning-flag
 * byte per point, the bits of `warningFlags` in the answers of POST /v1/eos/evaluate and /invert
 * (1 PARTIAL_IONIZATION, 2 NEUTRON_DRIP, 4 CRYSTALLIZED, 8 NON_POSITIVE_PRESSURE,
 * 16 MECHANICALLY_UNSTABLE, 32 QUANTUM_IONS), so the result files carry the same cautions.
 *
 * Chunks stored before this migration keep null here: their warnings were not recorded, which is
 * not the same as "no warnings" (gateway/jobs/results.ts writes them as unknown, never as 0).
 */
import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.schema.alterTable('job_chunks', (t) => {
    t.binary('warning_flags').comment('one warning-flag byte per point (warningFlags of /v1/eos/evaluate); null until computed, and for chunks stored before warnings were recorded');
  });
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('job_chunks', (t) => {
    t.dropColumn('warning_flags');
  });
}
