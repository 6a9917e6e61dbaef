/**
 * `npm run worker`: a standalone job worker (gateway/jobs/worker.ts) — the way a group outgrows one
 * machine. It needs only DATABASE_URL (the same database as the gateways) and computes chunks of
 * batch jobs and table builds from the shared queue until SIGTERM/SIGINT, which lets the running
 * chunks finish (up to SHUTDOWN_TIMEOUT_MS) before it exits. Every other setting is the gateway's
 * (README "Configuration" and "Scaling out"): EOS_POOL_MAX_THREADS, JOBS_WORKER_CONCURRENCY,
 * EOS_TABLE_PATH (method "table"), SMTP_* for the mails, PUBLIC_URL for their links.
 */
import { randomBytes } from 'node:crypto';
import { ConfigError, loadConfig } from '../gateway/config.js';
import { createDb } from '../gateway/db.js';
import { createLogger } from '../gateway/logger.js';
import { startStandaloneWorker } from '../gateway/jobs/setup.js';

async function main() {
  let config;
  try {
    // The worker signs no sessions; the gateway's configuration requires a JWT secret, so a worker
    // started without one gets a random one it never uses.
    config = loadConfig({ JWT_SECRET: randomBytes(32).toString('hex'), ...process.env });
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(error.message);
      process.exit(1);
    }
    throw error;
  }
  const logger = createLogger(config.LOG_LEVEL);
  const db = createDb(config.DATABASE_URL, Math.min(config.DATABASE_POOL_MAX, 5));
  const running = await startStandaloneWorker(config, db, logger);
  // a line other processes (and tests) can wait for
  console.log(`worker ${running.worker.name} ready`);
  let stopping = false;
  const stop = () => {
    if (stopping) return;
    stopping = true;
    running
      .stop()
      .then(() => db.destroy())
      .then(
        () => process.exit(0),
        (error) => {
          console.error(error);
          process.exit(1);
        },
      );
  };
  process.once('SIGTERM', stop);
  process.once('SIGINT', stop);
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
