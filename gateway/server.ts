/**
 * Starts the gateway and stops it gracefully: on SIGTERM/SIGINT it stops accepting connections,
 * lets in-flight requests finish (up to SHUTDOWN_TIMEOUT_MS), then closes the database pool.
 * Run directly (`node --import tsx gateway/server.ts`) or embedded by scripts/start.ts.
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { fileURLToPath } from 'node:url';
import { ConfigError, loadConfig, type Config } from './config.js';
import { createDb } from './db.js';
import { createLogger } from './logger.js';
import { createApp } from './app.js';

export interface RunningGateway {
  url: string;
  port: number;
  server: http.Server;
  close(): Promise<void>;
  /** Loads the free-energy table ahead of the first "table" request (process starts call it; tests do not). */
  warmTable(): Promise<void>;
}

export async function startGateway(config: Config): Promise<RunningGateway> {
  const logger = createLogger(config.LOG_LEVEL);
  const db = createDb(config.DATABASE_URL, config.DATABASE_POOL_MAX);
  const { app, services, eos } = await createApp({ config, db, logger });
  const server = http.createServer(app);
  server.keepAliveTimeout = 5_000;
  server.requestTimeout = 120_000;

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(config.PORT, config.HOST, () => resolve());
  });
  const { port } = server.address() as AddressInfo;
  const url = `http://${config.HOST}:${port}`;
  logger.info({ url }, 'gateway listening');

  let closing: Promise<void> | undefined;
  const close = () =>
    (closing ??= (async () => {
      logger.info('gateway shutting down: no new connections, finishing in-flight requests');
      const drained = new Promise<void>((resolve) => server.close(() => resolve()));
      // Keep-alive connections that finish their request after close() began would otherwise
      // linger until keepAliveTimeout: close each as soon as it is idle.
      server.closeIdleConnections();
      const sweeper = setInterval(() => server.closeIdleConnections(), 50);
      const timer = setTimeout(() => server.closeAllConnections(), config.SHUTDOWN_TIMEOUT_MS);
      await drained;
      clearInterval(sweeper);
      clearTimeout(timer);
      await services.close();
      await db.destroy();
      logger.info('gateway stopped');
      logger.flush();
    })());

  return { url, port, server, close, warmTable: () => eos.warmTable() };
}

async function main() {
  let config: Config;
  try {
    config = loadConfig();
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(error.message);
      process.exit(1);
    }
    throw error;
  }
  const gateway = await startGateway(config);
  void gateway.warmTable();
  const stop = () => {
    gateway.close().then(
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

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  await main();
}
