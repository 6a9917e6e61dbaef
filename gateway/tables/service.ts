/**
 * Table builds (DESIGN.md §4, §7): a free-energy table for a code's own grid, built by a worker
 * from the queue (gateway/tables/runner.ts) and downloaded as HDF5 with its accuracy report.
 *
 * The grid: bounds in log10 ρYe (g/cm³) and log10 T (K) and points per decade (one number for both
 * directions, or one per direction), checked by the builder's own rules (eos validateGrid: bounds
 * whole multiples of the spacing, log10 T in [3, 13], log10 ρYe in [−15, 15]) and capped at
 * MAX_TABLE_NODES nodes. The pair-gas table is composition-independent; a `composition` (abar/zbar,
 * nuclides or a mixture name, resolved like evaluate's) adds that mixture's ion and Coulomb terms.
 *
 * Each request counts against the plan's table builds per month (plans.table_builds_per_month,
 * null = unlimited) — counted and inserted under a per-organisation lock so two concurrent requests
 * cannot both take the last one; a build that fails does not count.
 */
import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { z } from 'zod';
import * as eosLib from '../../eos/index.js';
import { gridSize, validateGrid, type TableGrid } from '../../eos/free-energy-table.js';
import type { Config } from '../config.js';
import type { CompositionRequest, EosService } from '../eos/service.js';
import { QUEUES, type JobQueue } from '../jobs/queue.js';
import type { JobCaller, JobsService, JobView } from '../jobs/service.js';
import * as store from '../jobs/store.js';
import { ProblemError } from '../shared/problem.js';
import { parse } from '../shared/validate.js';
import { nextPeriod, periodStart } from '../usage/meter.js';
import { planTitle } from '../plans/store.js';
import type { FixedMixture } from './mixture-terms.js';

export const MAX_TABLE_NODES = 250_000;

const bound = z.number({ error: 'must be a number' }).finite();
const perDecade = z.number({ error: 'must be a number' }).int('must be a whole number').min(1).max(200);

export const tableBuildBody = z
  .object({
    name: z.string().trim().min(1).max(200).optional(),
    grid: z
      .object({
        logDensityYeMin: bound,
        logDensityYeMax: bound,
        logTemperatureMin: bound,
        logTemperatureMax: bound,
        pointsPerDecade: perDecade.optional(),
        pointsPerDecadeDensity: perDecade.optional(),
        pointsPerDecadeTemperature: perDecade.optional(),
        /** A denser band of log10 T (ends on the coarse axis); left out: the builder's pair-onset band; null: a uniform axis. */
        refinedTemperature: z.object({ logTemperatureMin: bound, logTemperatureMax: bound, pointsPerDecade: z.number().int().min(1).max(400) }).strict().nullable().optional(),
      })
      .strict(),
    composition: z.record(z.string(), z.unknown()).nullable().optional(),
  })
  .strict();

export type TableBuildBody = z.infer<typeof tableBuildBody>;

export class TableBuildService {
  constructor(
    private readonly db: Knex,
    private readonly jobs: JobsService,
    private readonly eos: EosService,
    private readonly queue: JobQueue,
    private readonly config: Config,
  ) {}

  async request(caller: JobCaller, raw: unknown): Promise<JobView> {
    await this.jobs.authorize(caller, 'jobs.create');
    const body = parse(tableBuildBody, raw);
    const g = body.grid;
    const grid: TableGrid = {
      logDensityYeMin: g.logDensityYeMin,
      logDensityYeMax: g.logDensityYeMax,
      logTemperatureMin: g.logTemperatureMin,
      logTemperatureMax: g.logTemperatureMax,
      pointsPerDecadeDensity: g.pointsPerDecadeDensity ?? g.pointsPerDecade ?? 0,
      pointsPerDecadeTemperature: g.pointsPerDecadeTemperature ?? g.pointsPerDecade ?? 0,
      ...(g.refinedTemperature !== undefined ? { refinedTemperature: g.refinedTemperature } : {}),
    };
    if (!grid.pointsPerDecadeDensity || !grid.pointsPerDecadeTemperature) {
      throw invalidGrid('Give pointsPerDecade, or both pointsPerDecadeDensity and pointsPerDecadeTemperature.');
    }
    try {
      validateGrid(grid);
    } catch (error) {
      throw invalidGrid(`${(error as Error).message.replace(/^table grid: /, '')}.`);
    }
    const { nD, nT } = gridSize(grid);
    if (nD * nT > MAX_TABLE_NODES) {
      throw invalidGrid(`This grid has ${nD} × ${nT} = ${nD * nT} nodes; a table build takes at most ${MAX_TABLE_NODES}. Narrow the bounds or use fewer points per decade.`, { nodes: nD * nT, maxNodes: MAX_TABLE_NODES });
    }
    const mixture = body.composition ? await this.fixedMixture(caller, body.composition as CompositionRequest) : null;
    const limits = await this.jobs.limits(caller);
    const createdBy = caller.actor?.userId ?? (caller.key ? ((await this.db('api_keys').where({ id: caller.key.keyId }).first('created_by'))?.created_by ?? null) : null);
    const name = body.name ?? `table ρYe 1e${grid.logDensityYeMin}–1e${grid.logDensityYeMax}, T 1e${grid.logTemperatureMin}–1e${grid.logTemperatureMax}`;
    const queueJobId = randomUUID();
    const row = await this.db.transaction(async (trx) => {
      await trx.raw('SELECT pg_advisory_xact_lock(hashtext(?))', [`table-builds:${caller.organisationId}`]);
      const period = periodStart();
      if (limits.tableBuildsPerMonth !== null) {
        const used = await store.tableBuildsSince(trx, caller.organisationId, new Date(period));
        if (used >= limits.tableBuildsPerMonth) {
          throw new ProblemError(
            'table-build-limit',
            429,
            'Table builds used up',
            // the plan by its name, counts in words that agree
            `The ${planTitle(limits.plan)} plan includes ${limits.tableBuildsPerMonth} table build${limits.tableBuildsPerMonth === 1 ? '' : 's'} a month, and ${used} ${used === 1 ? 'was' : 'were'} requested this period. Nothing was queued. Move to a larger plan on the Plan & billing page, or wait for the next period (starts ${new Date(nextPeriod(period)).toISOString()}).`,
            { tableBuildsPerMonth: limits.tableBuildsPerMonth, used },
          );
        }
      }
      const job = await store.insertJob(trx, {
        organisation_id: caller.organisationId,
        kind: 'table',
        name,
        created_by: createdBy,
        api_key_id: caller.key?.keyId ?? null,
        request: { grid, mixture, queueJobId, modelVersion: eosLib.MODEL_VERSION },
        points: nD * nT,
      });
      await this.queue.insertIn(trx, [
        {
          id: queueJobId,
          name: QUEUES.table,
          data: { jobId: job.id },
          retryLimit: 1,
          retryDelay: 5,
          expireInSeconds: this.config.TABLE_BUILD_EXPIRE_SECONDS,
          deadLetter: QUEUES.tableDead,
        },
      ]);
      return job;
    });
    return this.jobs.view(row);
  }

  /** The mixture resolved through the EOS service's composition rules (built-in and saved mixtures too). */
  private async fixedMixture(caller: JobCaller, composition: CompositionRequest): Promise<FixedMixture> {
    const resolved = await this.eos.withSavedMixture(caller.organisationId, { density: 1, temperature: 1e6, composition });
    const batch = await this.eos.prepare('evaluate', resolved, { plan: 'table', pointsPerMonth: Infinity, requestsPerSecond: Infinity, maxBatch: 1, tableBuildsPerMonth: null });
    const c = batch.composition;
    const scalar = (x: unknown) => (typeof x === 'number' ? x : Number((x as ArrayLike<number>)[0]));
    let stored: Record<string, unknown>;
    let mean: { abar: number; zbar: number; ye: number };
    if (c.kind === 'mean') {
      const abar = scalar(c.abar);
      const zbar = scalar(c.zbar);
      stored = { abar, zbar };
      mean = { abar, zbar, ye: zbar / abar };
    } else {
      const nuclides = c.nuclides.map((nu) => ({ a: nu.a, z: nu.z, massFraction: scalar(nu.massFraction) }));
      stored = { nuclides, normalize: c.normalize };
      mean = eosLib.meanComposition(nuclides, { normalize: c.normalize });
    }
    return { composition: stored, ...mean, name: typeof composition.mixture === 'string' ? composition.mixture : null };
  }
}

function invalidGrid(detail: string, extensions: Record<string, unknown> = {}): ProblemError {
  return new ProblemError('invalid-grid', 422, 'Invalid table grid', detail, extensions);
}
