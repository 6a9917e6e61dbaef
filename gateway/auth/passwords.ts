/**
 * Passwords: argon2id through @node-rs/argon2 with its defaults (19 MiB, 2 passes, 1 lane — the
 * OWASP baseline for argon2id), a length policy (10–200 characters, nothing else imposed), and a
 * verify that takes the same time whether or not the account exists.
 */
import { hash, verify } from '@node-rs/argon2';
import { randomBytes } from 'node:crypto';

export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;

export function hashPassword(password: string): Promise<string> {
  return hash(password);
}

let dummy: Promise<string> | undefined;

/** Checks a password against a stored hash; with no hash, burns the same time and answers false. */
export async function passwordMatches(password: string, stored: string | null | undefined): Promise<boolean> {
  if (!stored || !stored.startsWith('$argon2')) {
    dummy ??= hash(randomBytes(16).toString('hex'));
    await verify(await dummy, password).catch(() => false);
    return false;
  }
  return verify(stored, password).catch(() => false);
}
