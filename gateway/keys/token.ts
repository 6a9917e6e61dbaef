/**
 * API key tokens: fwk_<8-character public id>_<32-character secret> (DESIGN.md §2). The id is
 * lower-case alphanumeric, the secret base62 (~190 bits), both from the CSPRNG. The secret is stored
 * only as its SHA-256: with that much entropy a fast hash is the common practice (a password hash
 * would only slow every request), and comparisons are constant-time.
 */
import { createHash, randomInt, timingSafeEqual } from 'node:crypto';

const ID_ALPHABET = 'abcdefghijklmnopqrstuvwxyz0123456789';
const SECRET_ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789';
const TOKEN = /^fwk_([a-z0-9]{8})_([A-Za-z0-9]{32})$/;

function randomString(alphabet: string, length: number): string {
  let out = '';
  for (let i = 0; i < length; i++) out += alphabet[randomInt(alphabet.length)];
  return out;
}

export function newKeyId(): string {
  return randomString(ID_ALPHABET, 8);
}

export function newSecret(): string {
  return randomString(SECRET_ALPHABET, 32);
}

export function formatToken(id: string, secret: string): string {
  return `fwk_${id}_${secret}`;
}

export function parseToken(token: string): { id: string; secret: string } | undefined {
  const match = TOKEN.exec(token);
  return match ? { id: match[1]!, secret: match[2]! } : undefined;
}

export function hashSecret(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

export function secretMatches(secret: string, storedHash: string): boolean {
  const a = Buffer.from(hashSecret(secret), 'hex');
  const b = Buffer.from(storedHash, 'hex');
  return a.length === b.length && timingSafeEqual(a, b);
}
