/**
 * Headless Debian Chromium driven by playwright-core (never a downloaded browser). The flags keep
 * Chromium from reaching for the network, which this machine does not have.
 */
import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM = process.env['CHROMIUM_PATH'] ?? '/usr/bin/chromium';

export async function launchBrowser(): Promise<Browser> {
  if (!fs.existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} not found: npm test installs Debian's chromium package`);
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--no-first-run',
    ],
  });
}

/** Where screenshots go (kept as test artifacts). */
export function artifactPath(name: string): string {
  const dir = path.resolve(import.meta.dirname, '..', '..', 'test-results', 'e2e');
  fs.mkdirSync(dir, { recursive: true });
  return path.join(dir, name);
}
