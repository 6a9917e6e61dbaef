/**
 * The session-signing secret for local runs. `npm start` and `npm test` need a JWT_SECRET but no
 * secret may be written into product code, so one is generated per data folder on first use
 * (256 random bits, file mode 600) and passed to the gateway as JWT_SECRET. A JWT_SECRET already in
 * the environment wins. Deleting the file signs everyone out of that local instance.
 */
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

export function devJwtSecret(dataDir: string, env: NodeJS.ProcessEnv = process.env): string {
  const given = env['JWT_SECRET'];
  if (given) return given;
  const file = path.join(dataDir, 'jwt-secret');
  try {
    const existing = fs.readFileSync(file, 'utf8').trim();
    if (existing.length >= 32) return existing;
  } catch {
    // first run: create it below
  }
  fs.mkdirSync(dataDir, { recursive: true });
  const secret = randomBytes(32).toString('base64url');
  fs.writeFileSync(file, secret + '\n', { mode: 0o600 });
  return secret;
}
