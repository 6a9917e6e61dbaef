/**
 * Brings a database to the current schema (and, for the demo, seeds it), using the gateway's own
 * migration source so `npm start`, `npm test` and the gateway agree on what "current" means.
 */
import { createDb, migrateLatest, runSeeds } from '../../gateway/db.js';

export async function prepareDatabase(url: string, options: { seed: boolean }) {
  const db = createDb(url, 2);
  try {
    const { applied } = await migrateLatest(db);
    const seeded = options.seed ? await runSeeds(db) : [];
    return { applied, seeded };
  } finally {
    await db.destroy();
  }
}
