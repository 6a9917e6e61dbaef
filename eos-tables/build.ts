/**
 * Builds, caches and loads the free-energy table of the electron–positron gas (the method of
 * Timmes & Swesty 2000, ApJS 126, 501; the physics in eos/free-energy-table.ts).
 *
 * `ensureFreeEnergyTable` looks for `<dataDir>/tables/<key>.h5`, the key a hash of the model
 * version, the table format version, the constants set and the grid; when it is missing, unreadable
 * or was built by another model version, it builds the table on all cores (node:worker_threads,
 * build-worker.ts beside this file): grid rows are handed out in small chunks so the cores stay
 * busy although rows differ in cost, node values land in one SharedArrayBuffer, then the same
 * workers measure the accuracy report (cell centres + seeded random points against the exact
 * method). Progress goes to the terminal: one line updated in place on a TTY, a line every ~10 %
 * otherwise. The file is written to a temporary name and renamed, so a reader never sees half a
 * table and an interrupted build leaves no file under the cache name.
 */

import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { MODEL_VERSION } from '../eos/index.js';
import { CONSTANTS_SET } from '../eos/constants.js';
import {
  accuracySamplePoints, ACCURACY_QUANTITIES, assembleTable, DEFAULT_TABLE_GRID, gridSize, resolveGrid, summarizeAccuracy, validateGrid,
  TABLE_COLUMN_COUNT, TABLE_FORMAT_VERSION, type FreeEnergyTable, type TableGrid,
} from '../eos/free-energy-table.js';
import { readTable, writeTable, type BuildParameters } from './table-file.js';

/** Messages main → worker. */
export type WorkerRequest =
  | { type: 'rows'; iStart: number; iEnd: number }
  | { type: 'errors'; from: number; to: number; randomPoints: number; seed: number; cellCentres: boolean };
/** Messages worker → main. */
export type WorkerReply =
  | { type: 'rows'; iStart: number; iEnd: number; failed: number }
  | { type: 'errors'; from: number; to: number; err: Float64Array }
  | { type: 'failed'; message: string };

export type ProgressMode = 'auto' | 'tty' | 'lines' | 'none';

export interface AccuracyOptions {
  randomPoints?: number;
  seed?: number;
  cellCentres?: boolean;
}

export interface BuildOptions {
  /** worker threads; default: os.availableParallelism() */
  workers?: number;
  /** progress lines and messages; default console.log */
  log?: (line: string) => void;
  /** 'auto' (default): in place on a TTY stdout, else a line every ~10 % */
  progress?: ProgressMode;
  accuracy?: AccuracyOptions;
}

export interface EnsureTableOptions extends BuildOptions {
  dataDir: string;
  grid?: TableGrid;
  /** rebuild even when a matching file exists */
  force?: boolean;
}

export interface EnsuredTable {
  path: string;
  table: FreeEnergyTable;
  /** true when this call built the table, false when it was read from the cache */
  built: boolean;
}

const DEFAULT_RANDOM_POINTS = 2000;
const DEFAULT_SEED = 20000501;

/** Cache key: the model, format, constants and grid — everything the table's numbers depend on. */
export function tableCacheKey(grid: TableGrid = DEFAULT_TABLE_GRID, modelVersion = MODEL_VERSION): string {
  const g = resolveGrid(grid);
  const b = g.refinedTemperature;
  const ident = JSON.stringify([
    modelVersion, TABLE_FORMAT_VERSION, CONSTANTS_SET,
    g.logDensityYeMin, g.logDensityYeMax, g.logTemperatureMin, g.logTemperatureMax, g.pointsPerDecadeDensity, g.pointsPerDecadeTemperature,
    b ? [b.logTemperatureMin, b.logTemperatureMax, b.pointsPerDecade] : null,
  ]);
  return createHash('sha256').update(ident).digest('hex').slice(0, 20);
}

export function tableCachePath(dataDir: string, grid: TableGrid = DEFAULT_TABLE_GRID): string {
  return path.join(path.resolve(dataDir), 'tables', `${tableCacheKey(grid)}.h5`);
}

function sameGrid(a0: TableGrid, b0: TableGrid): boolean {
  const a = resolveGrid(a0), b = resolveGrid(b0);
  const ba = a.refinedTemperature, bb = b.refinedTemperature;
  const sameBand = ba === null || bb === null ? ba === bb
    : ba.logTemperatureMin === bb.logTemperatureMin && ba.logTemperatureMax === bb.logTemperatureMax && ba.pointsPerDecade === bb.pointsPerDecade;
  return sameBand && a.logDensityYeMin === b.logDensityYeMin && a.logDensityYeMax === b.logDensityYeMax && a.logTemperatureMin === b.logTemperatureMin
    && a.logTemperatureMax === b.logTemperatureMax && a.pointsPerDecadeDensity === b.pointsPerDecadeDensity
    && a.pointsPerDecadeTemperature === b.pointsPerDecadeTemperature;
}

/**
 * The table for `grid` (default: DEFAULT_TABLE_GRID) from the cache in `<dataDir>/tables/`, built
 * and written there first when no file matches the current model version.
 */
export async function ensureFreeEnergyTable(opts: EnsureTableOptions): Promise<EnsuredTable> {
  validateGrid(opts.grid ?? DEFAULT_TABLE_GRID);
  const grid = resolveGrid(opts.grid ?? DEFAULT_TABLE_GRID);
  const log = opts.log ?? ((line: string) => console.log(line));
  const file = tableCachePath(opts.dataDir, grid);
  if (!opts.force && fs.existsSync(file)) {
    try {
      const table = await readTable(file);
      if (table.modelVersion === MODEL_VERSION && table.constantsSet === CONSTANTS_SET && sameGrid(table.grid, grid)) {
        return { path: file, table, built: false };
      }
      log(`free-energy table ${file} was built for "${table.modelVersion}", not "${MODEL_VERSION}": rebuilding it`);
    } catch (error) {
      log(`free-energy table ${file} is unreadable (${error instanceof Error ? error.message : String(error)}): rebuilding it`);
    }
  }
  const { nD, nT } = gridSize(grid);
  log(`building the free-energy table: ${nD} × ${nT} nodes, log10 ρYe ∈ [${grid.logDensityYeMin}, ${grid.logDensityYeMax}], log10 T ∈ [${grid.logTemperatureMin}, ${grid.logTemperatureMax}], ${grid.pointsPerDecadeDensity} × ${grid.pointsPerDecadeTemperature} points per decade${grid.refinedTemperature ? ` (${grid.refinedTemperature.pointsPerDecade} per decade in log10 T ∈ [${grid.refinedTemperature.logTemperatureMin}, ${grid.refinedTemperature.logTemperatureMax}])` : ''} → ${file}`);
  const { table, parameters } = await buildTableParallel(grid, opts);
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const tmp = `${file}.tmp-${process.pid}-${Date.now()}`;
  try {
    await writeTable(tmp, table, parameters);
    fs.renameSync(tmp, file);
  } catch (error) {
    fs.rmSync(tmp, { force: true });
    throw error;
  }
  return { path: file, table, built: true };
}

/** Progress of one phase on the terminal. */
class Progress {
  private readonly t0 = Date.now();
  private lastDraw = 0;
  private nextTenth = 1;
  constructor(
    private readonly label: string, private readonly total: number, private readonly unit: string,
    private readonly unitsPerItem: number, private readonly mode: Exclude<ProgressMode, 'auto'>, private readonly log: (line: string) => void,
  ) {}

  private line(done: number): string {
    const s = (Date.now() - this.t0) / 1000;
    const rate = s > 0 ? done / this.unitsPerItem / s : 0;
    const left = rate > 0 ? (this.total - done) / this.unitsPerItem / rate : NaN;
    const eta = done >= this.total ? `done in ${s.toFixed(1)} s` : Number.isFinite(left) ? `ETA ${formatSeconds(left)}` : 'ETA …';
    return `${this.label} ${((100 * done) / this.total).toFixed(1).padStart(5)} %  ${rate.toFixed(rate < 10 ? 1 : 0)} ${this.unit}/s  ${eta}`;
  }

  update(done: number): void {
    if (this.mode === 'none') return;
    if (this.mode === 'tty') {
      const now = Date.now();
      if (now - this.lastDraw < 200 && done < this.total) return;
      this.lastDraw = now;
      process.stdout.write(`\r${this.line(done)}\x1b[K`);
      if (done >= this.total) process.stdout.write('\n');
    } else {
      if (done >= this.total || (10 * done) / this.total >= this.nextTenth) {
        this.log(this.line(done));
        this.nextTenth = Math.floor((10 * done) / this.total) + 1;
      }
    }
  }
}

function formatSeconds(s: number): string {
  if (s < 90) return `${Math.ceil(s)} s`;
  return `${Math.floor(s / 60)} min ${Math.round(s % 60)} s`;
}

/** Worker file beside this one: `.ts` under tsx, `.js` when compiled. */
function workerUrl(): URL {
  const ext = path.extname(fileURLToPath(import.meta.url));
  return new URL(`./build-worker${ext}`, import.meta.url);
}


/** A pool of build workers that hands out jobs as workers become free. */
async function runJobs<J extends WorkerRequest>(
  workers: Worker[], jobs: J[], onReply: (reply: Exclude<WorkerReply, { type: 'failed' }>) => void,
): Promise<void> {
  let next = 0;
  let finished = 0;
  await new Promise<void>((resolve, reject) => {
    if (jobs.length === 0) return resolve();
    const cleanups: Array<() => void> = [];
    const done = (error?: Error) => {
      for (const c of cleanups) c();
      if (error) reject(error);
      else resolve();
    };
    for (const w of workers) {
      const onMessage = (reply: WorkerReply) => {
        if (reply.type === 'failed') return done(new Error(`table build worker failed: ${reply.message}`));
        onReply(reply);
        finished++;
        if (finished === jobs.length) return done();
        if (next < jobs.length) w.postMessage(jobs[next++]);
      };
      const onError = (error: Error) => done(error);
      const onExit = (code: number) => done(new Error(`table build worker exited with code ${code}`));
      w.on('message', onMessage);
      w.on('error', onError);
      w.on('exit', onExit);
      cleanups.push(() => {
        w.off('message', onMessage);
        w.off('error', onError);
        w.off('exit', onExit);
      });
      if (next < jobs.length) w.postMessage(jobs[next++]);
    }
  });
}

/**
 * Builds the table for `grid` on `workers` threads with its accuracy report; does not write it.
 * Returns the table and the build parameters stored with it.
 */
export async function buildTableParallel(grid: TableGrid, opts: BuildOptions = {}): Promise<{ table: FreeEnergyTable; parameters: BuildParameters }> {
  validateGrid(grid);
  const log = opts.log ?? ((line: string) => console.log(line));
  const mode: Exclude<ProgressMode, 'auto'> = (opts.progress ?? 'auto') === 'auto' ? (process.stdout.isTTY ? 'tty' : 'lines') : (opts.progress as Exclude<ProgressMode, 'auto'>);
  const nWorkers = Math.max(1, Math.floor(opts.workers ?? os.availableParallelism()));
  const randomPoints = opts.accuracy?.randomPoints ?? DEFAULT_RANDOM_POINTS;
  const seed = opts.accuracy?.seed ?? DEFAULT_SEED;
  const cellCentres = opts.accuracy?.cellCentres ?? true;
  const { nD, nT } = gridSize(grid);
  const t0 = Date.now();

  const shared = new SharedArrayBuffer(nD * nT * TABLE_COLUMN_COUNT * 8);
  // The entry is a short script that imports the worker module. On Node 20 tsx's loader from
  // `--import tsx` (inherited through execArgv) does not reach worker threads, so under tsx the
  // script registers it (tsx/esm/api) before importing the `.ts` worker; compiled, it imports the `.js`.
  const href = workerUrl().href;
  const load = href.endsWith('.ts') ? `import('tsx/esm/api').then((m) => { m.register(); return import(${JSON.stringify(href)}); })` : `import(${JSON.stringify(href)})`;
  const entry = `${load}.catch((e) => { setImmediate(() => { throw e; }); });`;
  const workers = Array.from({ length: nWorkers }, () => new Worker(entry, { eval: true, workerData: { grid, nodeValues: shared } }));
  try {
    // 1. node values, a few rows per job (rows near the pair onset cost ~4× more than others)
    const rowsPerJob = Math.max(1, Math.floor(nD / (nWorkers * 25)));
    const rowJobs: WorkerRequest[] = [];
    for (let i = 0; i < nD; i += rowsPerJob) rowJobs.push({ type: 'rows', iStart: i, iEnd: Math.min(nD, i + rowsPerJob) });
    const nodeProgress = new Progress('table nodes   ', nD, 'rows', 1, mode, log);
    let rowsDone = 0;
    let failed = 0;
    nodeProgress.update(0);
    await runJobs(workers, rowJobs, (r) => {
      if (r.type !== 'rows') return;
      rowsDone += r.iEnd - r.iStart;
      failed += r.failed;
      nodeProgress.update(rowsDone);
    });
    if (failed > 0) throw new Error(`table build: the pair-gas solve failed at ${failed} nodes of grid ${JSON.stringify(grid)}`);
    const nodeSeconds = (Date.now() - t0) / 1000;
    const table = assembleTable(grid, new Float64Array(shared), { modelVersion: MODEL_VERSION, constantsSet: CONSTANTS_SET, seconds: nodeSeconds, workers: nWorkers });

    // 2. accuracy report, on the same workers (each assembles its copy of the table from the shared values)
    const t1 = Date.now();
    const pts = accuracySamplePoints(grid, randomPoints, seed, cellCentres);
    const n = pts.logD.length;
    const nq = ACCURACY_QUANTITIES.length;
    const err = new Float64Array((nq + 1) * n);
    const perJob = Math.max(1, Math.ceil(n / (nWorkers * 25)));
    const errJobs: WorkerRequest[] = [];
    for (let m = 0; m < n; m += perJob) errJobs.push({ type: 'errors', from: m, to: Math.min(n, m + perJob), randomPoints, seed, cellCentres });
    const accProgress = new Progress('table accuracy', n, 'points', 1, mode, log);
    let pointsDone = 0;
    accProgress.update(0);
    await runJobs(workers, errJobs, (r) => {
      if (r.type !== 'errors') return;
      const len = r.to - r.from;
      for (let q = 0; q <= nq; q++) err.set(r.err.subarray(q * len, (q + 1) * len), q * n + r.from);
      pointsDone += len;
      accProgress.update(pointsDone);
    });
    table.accuracy = summarizeAccuracy(err, pts, seed, pts.cellCentres);
    const accuracySeconds = (Date.now() - t1) / 1000;
    table.build = { builtAt: new Date().toISOString(), seconds: (Date.now() - t0) / 1000, workers: nWorkers, builder: 'eos-tables/build.ts (node:worker_threads)' };
    const parameters: BuildParameters = {
      workers: nWorkers, nodeSeconds, accuracySeconds, randomPoints, seed, cellCentres, accuracyPoints: n,
      cpus: os.cpus().length, node: process.version, host: os.hostname(),
    };
    return { table, parameters };
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
}

/** One line per quantity: max / median / 99th percentile of the relative error, and the Maxwell residual. */
export function formatAccuracy(table: FreeEnergyTable): string[] {
  const a = table.accuracy;
  if (!a) return ['no accuracy report'];
  const e = (x: number) => (Number.isFinite(x) ? x.toExponential(2) : String(x));
  const lines = [`accuracy vs exact (${a.cellCentres} cell centres + ${a.randomPoints} random points, seed ${a.seed}); relative errors max / median / p99 (worst at log10 ρYe, log10 T):`];
  for (const [q, s] of Object.entries(a.quantities)) {
    lines.push(`  ${q.padEnd(16)} ${e(s.max)} / ${e(s.median)} / ${e(s.p99)}   (${s.worstLogDensityYe.toFixed(3)}, ${s.worstLogTemperature.toFixed(3)})`);
  }
  lines.push(`  Maxwell residual max ${e(a.maxwellMax)}`);
  return lines;
}
