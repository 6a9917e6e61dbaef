/** Starts a real gateway on a free loopback port against the test database (DATABASE_URL from npm test). */
import { loadConfig } from '../../gateway/config.js';
import { startGateway, type RunningGateway } from '../../gateway/server.js';

export function testDatabaseUrl(): string {
  const url = process.env['DATABASE_URL'];
  if (!url) throw new Error('DATABASE_URL is not set: run gateway tests through `npm test` (it starts the test database).');
  return url;
}

export async function startTestGateway(env: Record<string, string> = {}): Promise<RunningGateway> {
  const config = loadConfig({
    ...process.env,
    NODE_ENV: 'test',
    LOG_LEVEL: process.env['LOG_LEVEL'] ?? 'silent',
    DATABASE_URL: testDatabaseUrl(),
    HOST: '127.0.0.1',
    PORT: '0',
    ...env,
  });
  return startGateway(config);
}
