/**
 * `npm run soak`: the reliability runs at full size, printing their figures (README "Reliability").
 * Starts its own throw-away PostgreSQL cluster (FW_SOAK_PG_PORT, default 54349; folder
 * <data dir>/pg-soak-<port>), the local mail catcher and payments fake, and the default free-energy
 * table, as `npm test` does; then runs each part in turn:
 *   fuzz — tests/reliability/fuzz-routes.ts at FUZZ_REQUESTS (default 10 000) requests, seed FUZZ_SEED,
 *          after its warm-up of every route; the heap after GC must end within FW_SOAK_HEAP_MARGIN_MB
 *          (default 10; measured +6.4 MB, nearly all JIT code, at 10 000 requests) of its baseline after the warm-up.
 *   load — tests/reliability/load-runner.ts: each plan at 3× its rate for FW_SOAK_LOAD_SECONDS (default
 *          10) s, capped at FW_SOAK_MAX_RATE (default 3000/s); rate limits per window and exact metering.
 * Exit status 1 when a part's goal is missed (e.g. any 5xx from the fuzz).
 */
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureCluster, ensureDatabase, startCluster, stopCluster, type Cluster } from './lib/postgres.js';
import { prepareDatabase } from './lib/database.js';
import { startLocalServices } from './lib/local-services.js';
import { ensureFreeEnergyTable } from '../eos-tables/build.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const log = (line: string) => console.log(`[soak] ${line}`);
const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
const pgPort = Number(process.env['FW_SOAK_PG_PORT'] ?? 54349);
const clusterDir = path.join(dataDir, `pg-soak-${pgPort}`);

/** One part of the soak: runs against the prepared environment, prints, says whether its goals held. */
interface SoakPart {
  name: string;
  run(): Promise<boolean>;
}

const fuzzPart: SoakPart = {
  name: 'fuzz',
  async run() {
    const { createDb } = await import('../gateway/db.js');
    const { startTestGateway } = await import('../tests/support/gateway.js');
    const { fuzzRoutes, formatFigures, heapVerdict } = await import('../tests/reliability/fuzz-routes.js');
    const { prepareFuzzCredentials } = await import('../tests/reliability/fuzz-setup.js');
    const seed = Number(process.env['FUZZ_SEED'] ?? 20_261_202);
    const requests = Number(process.env['FUZZ_REQUESTS'] ?? 10_000);
    const heapMarginMb = Number(process.env['FW_SOAK_HEAP_MARGIN_MB'] ?? 10);
    const gateway = await startTestGateway({ JOBS_IN_PROCESS_WORKER: 'false' });
    const db = createDb(process.env['DATABASE_URL']!, 2);
    try {
      const credentials = await prepareFuzzCredentials(gateway.url, db);
      const figures = await fuzzRoutes({ baseUrl: gateway.url, seed, requests, credentials, log });
      await credentials.close();
      console.log(formatFigures(figures));
      const heap = heapVerdict(figures, heapMarginMb * 1024 * 1024);
      console.log(heap.line);
      for (const f of figures.findings.slice(0, 20)) console.log(`  finding ${f.kind}: ${f.method} ${f.url} → ${f.status}\n    request: ${f.request}\n    answer: ${f.answer}`);
      return figures.serverErrors === 0 && figures.findings.length === 0 && figures.healthFailures === 0 && heap.held;
    } finally {
      await gateway.close();
      await db.destroy();
    }
  },
};

/** Load at three times each plan's rate: rate limits per server window and exact metering (tests/reliability/load-runner.ts). */
const loadPart: SoakPart = {
  name: 'load',
  async run() {
    const { soakLoad } = await import('../tests/reliability/load-runner.js');
    return soakLoad(log);
  },
};

const parts: SoakPart[] = [fuzzPart, loadPart];

async function main() {
  const only = process.argv.slice(2);
  let cluster: Cluster | undefined;
  let stopServices: (() => Promise<void>) | undefined;
  let ok = true;
  try {
    process.env['NODE_ENV'] = 'test';
    process.env['LOG_LEVEL'] ??= 'silent';
    process.env['JWT_SECRET'] = randomBytes(32).toString('base64url');
    fs.rmSync(clusterDir, { recursive: true, force: true });
    cluster = ensureCluster({ dir: clusterDir, port: pgPort, label: '[soak]' });
    await startCluster(cluster, '[soak]');
    await ensureDatabase(cluster.url('postgres'), 'fermiwell_soak');
    await prepareDatabase(cluster.url('fermiwell_soak'), { seed: true });
    process.env['DATABASE_URL'] = cluster.url('fermiwell_soak');
    process.env['TEST_PG_ADMIN_URL'] = cluster.url('postgres');
    const services = await startLocalServices({ dataDir: path.join(dataDir, 'soak-services'), test: true }, log);
    stopServices = services.stop;
    Object.assign(process.env, services.env);
    if (!process.env['EOS_TABLE_PATH']) process.env['EOS_TABLE_PATH'] = (await ensureFreeEnergyTable({ dataDir, log, progress: 'lines' })).path;
    for (const part of parts) {
      if (only.length && !only.includes(part.name)) continue;
      log(`── ${part.name} ──`);
      const started = Date.now();
      const held = await part.run();
      log(`${part.name}: goals ${held ? 'held' : 'MISSED'} (${((Date.now() - started) / 1000).toFixed(0)} s)`);
      ok &&= held;
    }
  } catch (error) {
    console.error(error);
    ok = false;
  } finally {
    await stopServices?.().catch(() => undefined);
    if (cluster) {
      stopCluster(cluster, '[soak]');
      fs.rmSync(clusterDir, { recursive: true, force: true });
    }
  }
  process.exit(ok ? 0 : 1);
}

await main();
