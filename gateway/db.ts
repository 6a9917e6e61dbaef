/**
 * The knex instance and the migration source. Migrations are TypeScript modules in migrations/,
 * recorded under their name WITHOUT extension, so runs under tsx (.ts) and compiled runs (.js)
 * agree about what has been applied (knex otherwise records "x.ts" and later sees "x.js").
 */
import fs from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import knexFactory, { type Knex } from 'knex';
import { repoRoot } from './config.js';

export function createDb(databaseUrl: string, poolMax = 10): Knex {
  return knexFactory({
    client: 'pg',
    connection: { connectionString: databaseUrl, application_name: 'fermiwell' },
    pool: { min: 0, max: poolMax },
    acquireConnectionTimeout: 5_000,
  });
}

const MIGRATIONS_DIR = path.join(repoRoot, 'migrations');
const SEEDS_DIR = path.join(repoRoot, 'seeds');
const MODULE_FILE = /^(\d{3,}[-_].+)\.(ts|js)$/;

function moduleNames(dir: string): Map<string, string> {
  const names = new Map<string, string>();
  for (const file of fs.readdirSync(dir).sort()) {
    const match = MODULE_FILE.exec(file);
    if (match && !file.endsWith('.d.ts')) names.set(match[1]!, path.join(dir, file));
  }
  return names;
}

type Migration = Knex.Migration;

export const migrationSource: Knex.MigrationSource<string> = {
  async getMigrations() {
    return [...moduleNames(MIGRATIONS_DIR).keys()];
  },
  getMigrationName(name) {
    return name;
  },
  async getMigration(name) {
    const file = moduleNames(MIGRATIONS_DIR).get(name);
    if (!file) throw new Error(`migration ${name} not found in ${MIGRATIONS_DIR}`);
    return (await import(pathToFileURL(file).href)) as Migration;
  },
};

export const migrationConfig: Knex.MigratorConfig = { migrationSource, tableName: 'knex_migrations' };

export async function migrateLatest(db: Knex) {
  const [batch, applied] = (await db.migrate.latest(migrationConfig)) as [number, string[]];
  return { batch, applied };
}

/** Pending migrations (empty when the schema is current). */
export async function pendingMigrations(db: Knex): Promise<string[]> {
  const [, pending] = (await db.migrate.list(migrationConfig)) as [unknown[], Array<{ file?: string } | string>];
  return pending.map((p) => (typeof p === 'string' ? p : String(p.file ?? p)));
}

/** Runs every seed in seeds/ in name order. Seeds are idempotent (they check before writing). */
export async function runSeeds(db: Knex): Promise<string[]> {
  const ran: string[] = [];
  for (const [name, file] of moduleNames(SEEDS_DIR)) {
    const mod = (await import(pathToFileURL(file).href)) as { seed: (db: Knex) => Promise<void> };
    await mod.seed(db);
    ran.push(name);
  }
  return ran;
}
