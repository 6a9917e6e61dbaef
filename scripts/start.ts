/**
 * `npm start` after the installs (scripts/start.sh): the project-local PostgreSQL cluster in .data/pg
 * (unless DATABASE_URL is set), migrations and demo seeds, the local fakes, the dashboard build, and
 * the default free-energy table (built on all cores when no cached file in .data/tables/ matches
 * the model version, else read from there; EOS_TABLE_PATH set: that file instead), and the gateway
 * serving API and dashboard on http://127.0.0.1:8080. Ctrl-C / SIGTERM stops everything
 * it started, in reverse order, PostgreSQL last.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureCluster, ensureDatabase, startCluster, stopCluster, type Cluster } from './lib/postgres.js';
import { prepareDatabase } from './lib/database.js';
import { startLocalServices } from './lib/local-services.js';
import { dashboardBrowserDir, ensureDashboardBuilt } from './lib/dashboard-build.js';
import { devJwtSecret } from './lib/dev-secret.js';
import { ensureFreeEnergyTable } from '../eos-tables/build.js';
import { ConfigError, loadConfig } from '../gateway/config.js';
import { startGateway, type RunningGateway } from '../gateway/server.js';
import { DEMO_KEYS, DEMO_USERS, demoToken } from '../seeds/demo-accounts.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const log = (line: string) => console.log(`[fermiwell] ${line}`);

const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
const pgPort = Number(process.env['FW_PG_PORT'] ?? 54329);

const cleanups: Array<() => Promise<void> | void> = [];
let stopping = false;

async function shutdown(code: number) {
  if (stopping) return;
  stopping = true;
  log('stopping…');
  for (const cleanup of cleanups.reverse()) {
    try {
      await cleanup();
    } catch (error) {
      console.error(error);
    }
  }
  process.exit(code);
}
process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

async function main() {
  let databaseUrl = process.env['DATABASE_URL'];
  if (databaseUrl) {
    log('DATABASE_URL is set: using that PostgreSQL, starting none');
  } else {
    const cluster: Cluster = ensureCluster({ dir: path.join(dataDir, 'pg'), port: pgPort, label: '[fermiwell]' });
    const started = await startCluster(cluster, '[fermiwell]');
    if (started) cleanups.push(() => stopCluster(cluster, '[fermiwell]'));
    else log(`PostgreSQL already running on 127.0.0.1:${pgPort}; leaving it running at exit`);
    await ensureDatabase(cluster.url('postgres'), 'fermiwell');
    databaseUrl = cluster.url('fermiwell');
  }
  if (stopping) return;

  const { applied, seeded } = await prepareDatabase(databaseUrl, { seed: true });
  log(`database ready (${applied.length} migration(s) applied${seeded.length ? `, seeds: ${seeded.join(', ')}` : ''})`);

  const services = await startLocalServices({ dataDir, test: false }, log);
  cleanups.push(() => services.stop());

  await ensureDashboardBuilt(root, log);
  if (stopping) return;

  // method "table": the gateway's worker threads read this file (EOS_TABLE_PATH)
  let tablePath = process.env['EOS_TABLE_PATH'];
  if (tablePath) log(`free-energy table: ${tablePath} (EOS_TABLE_PATH)`);
  else {
    const table = await ensureFreeEnergyTable({ dataDir, log });
    tablePath = table.path;
    log(`free-energy table ${table.built ? 'built' : 'found in the cache'}: ${tablePath}`);
  }
  if (stopping) return;

  let config;
  try {
    // the gateway serves the build this script made (FW_DASHBOARD_DIST moves it), unless DASHBOARD_DIR says otherwise
    const dashboardDir = process.env['DASHBOARD_DIR'] ?? dashboardBrowserDir(root);
    // warnings and errors only unless LOG_LEVEL says otherwise: a JSON line per request would scroll the
    // addresses and demo sign-ins below out of sight within seconds
    const logLevel = process.env['LOG_LEVEL'] ?? 'warn';
    config = loadConfig({ ...process.env, ...services.env, LOG_LEVEL: logLevel, DASHBOARD_DIR: dashboardDir, DATABASE_URL: databaseUrl, JWT_SECRET: devJwtSecret(dataDir), EOS_TABLE_PATH: tablePath });
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(error.message);
      return shutdown(1);
    }
    throw error;
  }
  const gateway: RunningGateway = await startGateway(config);
  cleanups.push(() => gateway.close());
  void gateway.warmTable();

  const shownUrl = gateway.url;
  console.log(`
  Fermiwell is running.
    Dashboard      ${shownUrl}/
    Health         ${shownUrl}/healthz   ${shownUrl}/readyz
    PostgreSQL     ${process.env['DATABASE_URL'] ? '(DATABASE_URL)' : `127.0.0.1:${pgPort}, data in ${path.join(dataDir, 'pg')}`}
${config.MAIL_INBOX_URL ? `    Mail inbox     ${config.MAIL_INBOX_URL}   (every mail the gateway sends lands here)\n` : ''}
  Demo sign-ins (invented demo data, local use only):
${DEMO_USERS.map((u) => `    ${(u.role ?? u.platformRole ?? '').padEnd(11)} ${u.email.padEnd(38)} ${u.password}`).join('\n')}

  Demo API key (${DEMO_KEYS[0].name}; demo database only):
    ${demoToken(DEMO_KEYS[0])}

  Gateway log: ${config.LOG_LEVEL}${process.env['LOG_LEVEL'] ? '' : ' (a line per request: LOG_LEVEL=info npm start)'}
  Press Ctrl-C to stop everything.
`);
}

main().catch(async (error) => {
  console.error(error instanceof Error ? error.message : error);
  await shutdown(1);
});
