/**
 * Builds the dashboard (`ng build`) when dist/ is missing or older than any of its sources.
 * FW_DASHBOARD_DIST puts the build elsewhere (e.g. one per working copy when several test runs share
 * a checkout); the gateway then needs DASHBOARD_DIR=<that>/browser, which `npm test` sets.
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

function newestMtime(entry: string): number {
  if (!fs.existsSync(entry)) return 0;
  const stat = fs.statSync(entry);
  if (!stat.isDirectory()) return stat.mtimeMs;
  let newest = stat.mtimeMs;
  for (const child of fs.readdirSync(entry)) newest = Math.max(newest, newestMtime(path.join(entry, child)));
  return newest;
}

export function dashboardDist(root: string): string {
  return path.resolve(process.env['FW_DASHBOARD_DIST'] ?? path.join(root, 'dist', 'dashboard'));
}

/** The build's browser/ folder: what the gateway serves (its DASHBOARD_DIR). */
export function dashboardBrowserDir(root: string): string {
  return path.join(dashboardDist(root), 'browser');
}

export function dashboardIsStale(root: string): boolean {
  const built = path.join(dashboardBrowserDir(root), 'index.html');
  if (!fs.existsSync(built)) return true;
  const builtAt = fs.statSync(built).mtimeMs;
  const sources = ['dashboard', 'angular.json', 'package-lock.json', 'schema'].map((p) => path.join(root, p));
  return sources.some((s) => newestMtime(s) > builtAt);
}

export async function ensureDashboardBuilt(root: string, log: (line: string) => void): Promise<void> {
  if (!dashboardIsStale(root)) return;
  log('building the dashboard (ng build; about a minute on 2 cores)…');
  const started = Date.now();
  await new Promise<void>((resolve, reject) => {
    const child = spawn(process.execPath, [path.join(root, 'node_modules', '@angular', 'cli', 'bin', 'ng.js'), 'build', `--output-path=${dashboardDist(root)}`], {
      cwd: root,
      stdio: ['ignore', 'inherit', 'inherit'],
      env: { ...process.env, NG_CLI_ANALYTICS: 'false' },
    });
    child.on('error', reject);
    child.on('exit', (code, signal) =>
      code === 0 ? resolve() : reject(new Error(`ng build failed (${signal ?? `exit ${code}`})`)),
    );
  });
  log(`dashboard built in ${((Date.now() - started) / 1000).toFixed(0)} s`);
}
