/**
 * Runs one table build taken from the queue: the electron–positron free-energy table for the
 * requested grid, built by eos-tables/build.ts (`buildTableParallel`, its worker threads and its
 * accuracy report against the exact method) and written by eos-tables/table-file.ts (`writeTable`),
 * then — when the request names a fixed mixture — the ion and Coulomb terms for that mixture on the
 * same nodes, computed through the EOS service's pool and added as the group `/ions_coulomb`
 * (gateway/tables/mixture-terms.ts). The file is stored in job_files with its SHA-256.
 *
 * Progress comes from the builder's progress lines (nodes, then accuracy), stored on the job. A
 * cancelled build is discarded when it ends (the builder takes no abort signal).
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type PgBoss from 'pg-boss';
import { buildTableParallel } from '../../eos-tables/build.js';
import { writeTable } from '../../eos-tables/table-file.js';
import type { TableGrid } from '../../eos/free-energy-table.js';
import type { Config } from '../config.js';
import type { EosService } from '../eos/service.js';
import { bufferFromFile } from '../jobs/hdf5.js';
import type { TableMessage } from '../jobs/queue.js';
import * as store from '../jobs/store.js';
import { addMixtureTerms, type FixedMixture } from './mixture-terms.js';
import { accuracySummary } from './accuracy.js';

/** Sample of off-grid points the builder checks against the exact method (besides every cell centre). */
export const ACCURACY_RANDOM_POINTS = 500;

/**
 * The download name of a build's file, from the build's name in ASCII: ρYe (ρ·Ye) as `density_ye`,
 * as the file's own `/grid/log_density_ye` says it, dashes kept, anything else unsafe as `_`. The
 * default name "table ρYe 1e4–1e8, T 1e7–1e10" gives table_density_ye_1e4-1e8_T_1e7-1e10.h5.
 */
export function tableFileName(name: string): string {
  const base = name
    .replace(/ρ\s*·?\s*Ye/g, 'density_ye')
    .replace(/ρ/g, 'rho')
    .replace(/[–—]/g, '-')
    .replace(/[^\w.-]+/g, '_')
    .replace(/^_+|_+$/g, '')
    .slice(0, 80) || 'table';
  return base.endsWith('.h5') ? base : `${base}.h5`;
}

export interface RunnerDeps {
  db: Knex;
  eos: EosService;
  config: Config;
  logger: Logger;
  notify(row: store.JobRow): Promise<void>;
}

export class TableBuildRunner {
  constructor(private readonly deps: RunnerDeps) {}

  async handle(message: PgBoss.JobWithMetadata<TableMessage>): Promise<void> {
    const { db, logger, config } = this.deps;
    const jobId = message.data.jobId;
    const job = await store.jobById(db, jobId);
    if (!job || !store.ACTIVE_STATES.includes(job.state)) return;
    await store.markRunning(db, jobId);
    const grid = job.request['grid'] as TableGrid;
    const mixture = (job.request['mixture'] ?? null) as FixedMixture | null;
    let lastWrite = 0;
    const onLine = (line: string) => {
      // "table nodes    42.0 %  …" then "table accuracy  …": nodes are ~85 % of the work
      const m = /^table (nodes|accuracy)\s+([\d.]+) %/.exec(line.trim());
      if (!m) return;
      const fraction = Number(m[2]) / 100;
      const progress = m[1] === 'nodes' ? 0.85 * fraction : 0.85 + 0.1 * fraction;
      const now = Date.now();
      if (now - lastWrite < 500 && fraction < 1) return;
      lastWrite = now;
      void store.setProgress(db, jobId, Math.min(0.95, progress)).catch(() => undefined);
    };
    try {
      const { table, parameters } = await buildTableParallel(grid, {
        workers: config.TABLE_BUILD_THREADS,
        progress: 'lines',
        log: onLine,
        accuracy: { randomPoints: ACCURACY_RANDOM_POINTS },
      });
      const still = await store.jobById(db, jobId);
      if (!still || !store.ACTIVE_STATES.includes(still.state)) return; // cancelled meanwhile
      const bytes = await bufferFromFile(async (file) => {
        await writeTable(file, table, { ...parameters, job_id: jobId, requested_by_organisation: job.organisation_id });
        if (mixture) await addMixtureTerms(file, table, mixture, this.deps.eos);
      });
      const finished = await db.transaction(async (trx) => {
        const file = await store.insertFile(trx, {
          organisationId: job.organisation_id,
          jobId,
          role: 'table-hdf5',
          fileName: tableFileName(job.name),
          contentType: 'application/x-hdf5',
          content: bytes,
        });
        return store.finish(trx, jobId, 'completed', {
          result: { grid: table.grid, nDensity: table.nD, nTemperature: table.nT, buildSeconds: table.build.seconds, accuracy: accuracySummary(table.accuracy), sha256: file?.sha256 ?? null, mixture },
          error: null,
        });
      });
      if (finished) {
        logger.info({ jobId }, 'table build completed');
        await this.deps.notify(finished);
      }
    } catch (error) {
      logger.warn({ jobId, err: error }, 'table build failed; the queue retries it');
      await db('jobs').where({ id: jobId }).update({ error: (error as Error).message });
      throw error;
    }
  }
}
