/**
 * `npm test` after the installs (scripts/test.sh). Starts a throw-away PostgreSQL cluster (its own
 * folder .data/pg-test-<port> and its own port, so it runs beside `npm start`), migrates a test database,
 * builds the dashboard if stale, runs every layer — eos, gateway, examples (the C, Fortran and
 * Python clients compiled and run against a test gateway), dashboard (vitest), end-to-end (Chromium) —
 * and ends with the line "N passed, N failed" (", N skipped" when any were skipped;
 * under CI a skipped test fails the run). Exit status 1 on any failure. The cluster is removed at
 * the end. The gateway and end-to-end layers get the default free-energy table in EOS_TABLE_PATH:
 * the cached file in <data dir>/tables/ (FW_DATA_DIR or .data/, shared with `npm start`), built
 * first (~15 s on all cores) when none matches the model version. Arguments: run only these test files, e.g. `npm test -- tests/eos/constants.test.ts`.
 */
import { spawn } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureCluster, ensureDatabase, startCluster, stopCluster, type Cluster } from './lib/postgres.js';
import { prepareDatabase } from './lib/database.js';
import { startLocalServices } from './lib/local-services.js';
import { dashboardBrowserDir, ensureDashboardBuilt } from './lib/dashboard-build.js';
import { ensureFreeEnergyTable } from '../eos-tables/build.js';
import { add, parseTap, parseVitest, zero, type Counts } from './lib/test-counts.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const log = (line: string) => console.log(`[test] ${line}`);
const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
const pgPort = Number(process.env['FW_TEST_PG_PORT'] ?? 54339);
// one folder per port, so runs on different ports never touch each other's cluster
const clusterDir = path.join(dataDir, `pg-test-${pgPort}`);
const resultsDir = path.join(root, 'test-results');

interface Layer {
  name: string;
  files: string[];
  run(files: string[], env: NodeJS.ProcessEnv): Promise<Counts>;
}

function findTests(dir: string): string[] {
  const abs = path.join(root, dir);
  if (!fs.existsSync(abs)) return [];
  return (fs.readdirSync(abs, { recursive: true }) as string[])
    .filter((f) => f.endsWith('.test.ts'))
    .map((f) => path.join(dir, f))
    .sort();
}

function runProcess(cmd: string, args: string[], env: NodeJS.ProcessEnv): Promise<{ code: number; output: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: root, env, stdio: ['ignore', 'pipe', 'pipe'] });
    let output = '';
    child.stdout.on('data', (b: Buffer) => {
      output += b;
      process.stdout.write(b);
    });
    child.stderr.on('data', (b: Buffer) => {
      output += b;
      process.stderr.write(b);
    });
    child.on('error', reject);
    child.on('exit', (code, signal) => resolve({ code: code ?? (signal ? 1 : 0), output }));
  });
}

/** node:test with the spec reporter on the terminal and TAP in a file we read the counts from. */
function nodeTestLayer(name: string, dir: string): Layer {
  return {
    name,
    files: findTests(dir),
    async run(files, env) {
      fs.mkdirSync(resultsDir, { recursive: true });
      const tapFile = path.join(resultsDir, `${name}-${process.pid}.tap`);
      fs.rmSync(tapFile, { force: true });
      const { code } = await runProcess(
        process.execPath,
        [
          '--import', 'tsx',
          '--test',
          '--test-reporter=spec', '--test-reporter-destination=stdout',
          '--test-reporter=tap', `--test-reporter-destination=${tapFile}`,
          ...files,
        ],
        env,
      );
      const counts = fs.existsSync(tapFile) ? parseTap(fs.readFileSync(tapFile, 'utf8')) : undefined;
      if (!counts) return { passed: 0, failed: Math.max(1, files.length), skipped: 0 };
      // a crash outside any test (e.g. an import error) must not pass silently
      if (code !== 0 && counts.failed === 0) counts.failed = 1;
      return counts;
    },
  };
}

const dashboardLayer: Layer = {
  name: 'dashboard',
  files: [],
  async run(files, env) {
    const ng = path.join(root, 'node_modules', '@angular', 'cli', 'bin', 'ng.js');
    const include = files.map((f) => `--include=${f}`);
    const { code, output } = await runProcess(process.execPath, [ng, 'test', '--watch=false', ...include], { ...env, NG_CLI_ANALYTICS: 'false' });
    const counts = parseVitest(output);
    if (!counts) return { passed: 0, failed: 1, skipped: 0 };
    if (code !== 0 && counts.failed === 0) counts.failed = 1;
    return counts;
  },
};

async function main() {
  const requested = process.argv.slice(2).map((f) => path.relative(root, path.resolve(f)));
  const layers: Layer[] = [
    nodeTestLayer('eos', 'tests/eos'),
    nodeTestLayer('gateway', 'tests/gateway'),
    nodeTestLayer('examples', 'tests/examples'),
    nodeTestLayer('reliability', 'tests/reliability'),
    dashboardLayer,
    nodeTestLayer('e2e', 'tests/e2e'),
  ];
  const selected = requested.length
    ? layers
        .map((layer) => ({
          ...layer,
          files:
            layer.name === 'dashboard'
              ? requested.filter((r) => r.startsWith('dashboard'))
              : layer.files.filter((f) => requested.some((r) => f === r || f.startsWith(r + path.sep))),
          wanted: layer.name === 'dashboard' ? requested.some((r) => r.startsWith('dashboard')) : true,
        }))
        .filter((l) => l.wanted && (l.name === 'dashboard' || l.files.length > 0))
    : layers.filter((l) => l.name === 'dashboard' || l.files.length > 0);
  if (selected.length === 0) {
    console.error(`No test files match ${requested.join(' ')}`);
    process.exit(1);
  }

  const needsDatabase = selected.some((l) => l.name === 'gateway' || l.name === 'examples' || l.name === 'reliability' || l.name === 'e2e');
  const needsDashboard = selected.some((l) => l.name === 'e2e');
  let cluster: Cluster | undefined;
  let stopServices: (() => Promise<void>) | undefined;
  let interrupted = false;

  const teardown = async () => {
    await stopServices?.().catch(() => undefined);
    if (cluster) {
      try {
        stopCluster(cluster, '[test]');
      } catch (error) {
        console.error(error);
      }
      fs.rmSync(clusterDir, { recursive: true, force: true });
      cluster = undefined;
    }
  };
  for (const signal of ['SIGINT', 'SIGTERM'] as const) {
    process.on(signal, () => {
      interrupted = true;
      void teardown().then(() => process.exit(130));
    });
  }

  const started = Date.now();
  let total = zero();
  try {
    const env: NodeJS.ProcessEnv = { ...process.env, NODE_ENV: 'test', LOG_LEVEL: process.env['LOG_LEVEL'] ?? 'silent' };
    // a fresh session-signing secret per run: never one written into the code (gateway/config.ts)
    env['JWT_SECRET'] = randomBytes(32).toString('base64url');
    env['DASHBOARD_DIR'] = dashboardBrowserDir(root);
    if (needsDatabase) {
      // A fresh cluster every run: nothing left over from an earlier run can make a test pass.
      fs.rmSync(clusterDir, { recursive: true, force: true });
      cluster = ensureCluster({ dir: clusterDir, port: pgPort, label: '[test]' });
      await startCluster(cluster, '[test]');
      await ensureDatabase(cluster.url('postgres'), 'fermiwell_test');
      await prepareDatabase(cluster.url('fermiwell_test'), { seed: true });
      env['DATABASE_URL'] = cluster.url('fermiwell_test');
      env['TEST_PG_ADMIN_URL'] = cluster.url('postgres');
      const services = await startLocalServices({ dataDir: path.join(dataDir, 'test-services'), test: true }, log);
      stopServices = services.stop;
      Object.assign(env, services.env);
      if (!env['EOS_TABLE_PATH']) {
        const table = await ensureFreeEnergyTable({ dataDir, log, progress: 'lines' });
        env['EOS_TABLE_PATH'] = table.path;
        log(`free-energy table ${table.built ? 'built' : 'found in the cache'}: ${table.path}`);
      }
    }
    if (needsDashboard) await ensureDashboardBuilt(root, log);

    for (const layer of selected) {
      if (interrupted) break;
      log(`── ${layer.name} ──`);
      const layerStart = Date.now();
      const counts = await layer.run(layer.files, env);
      log(`${layer.name}: ${counts.passed} passed, ${counts.failed} failed${counts.skipped ? `, ${counts.skipped} skipped` : ''} (${((Date.now() - layerStart) / 1000).toFixed(1)} s)`);
      total = add(total, counts);
    }
  } catch (error) {
    console.error(error);
    total.failed += 1;
  } finally {
    await teardown();
  }

  log(`all layers took ${((Date.now() - started) / 1000).toFixed(0)} s`);
  const ciSkips = process.env['CI'] && total.skipped > 0;
  if (ciSkips) console.error('[test] skipped tests are not allowed in CI');
  console.log(`${total.passed} passed, ${total.failed} failed${total.skipped ? `, ${total.skipped} skipped` : ''}`);
  process.exit(total.failed > 0 || ciSkips || total.passed === 0 ? 1 : 0);
}

await main();
