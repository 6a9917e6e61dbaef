/**
 * The PostgreSQL rate-limit store (gateway/usage/rate-limit-store.ts) as two gateway instances use
 * it: each counts its own hits and learns the other's at a sync; a window is synced only when it was
 * used on that instance since the last sync. Two stores on the test database stand for two instances.
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import type { Options } from 'express-rate-limit';
import { createDb } from '../../gateway/db.js';
import { PostgresRateLimitStore } from '../../gateway/usage/rate-limit-store.js';
import { testDatabaseUrl } from '../support/gateway.js';

const db = createDb(testDatabaseUrl(), 2);
after(() => db.destroy());

// a window long enough that the test never crosses its end
const options = { windowMs: 3_600_000 } as Options;

/** Two stores (two instances) on their own key prefix, stopped and their rows removed afterwards. */
async function withTwoInstances(name: string, run: (a: PostgresRateLimitStore, b: PostgresRateLimitStore, prefix: string) => Promise<void>): Promise<void> {
  const prefix = `rl-test-${process.pid}-${name}:`;
  const a = new PostgresRateLimitStore(db, prefix);
  const b = new PostgresRateLimitStore(db, prefix);
  a.init(options);
  b.init(options);
  try {
    await run(a, b, prefix);
  } finally {
    await a.shutdown();
    await b.shutdown();
    await db('rate_limit_windows').where('key', 'like', `${prefix}%`).delete();
  }
}

test('two instances share one counter: hits made on one are part of the other\'s count after both sync', async () => {
  await withTwoInstances('a', async (a, b, prefix) => {
    assert.equal((await b.get('k')).totalHits, 0);
    for (let i = 0; i < 3; i++) await a.increment('k');
    assert.equal((await a.get('k')).totalHits, 3);
    await a.sync();
    await b.increment('k');
    await b.sync();
    assert.equal((await b.get('k')).totalHits, 4, 'b sees a\'s three hits and its own');
    await a.get('k'); // used on a again (judged on the count of a's last sync) …
    await a.sync(); // … so this sync refreshes it
    assert.equal((await a.get('k')).totalHits, 4, 'a sees b\'s hit after its next sync');
    const [row] = await db('rate_limit_windows').where({ key: `${prefix}k` });
    assert.equal(Number(row.hits), 4);
  });
});

test('a window not used on an instance since its last sync is not written again; used again, it learns the others\' hits', async () => {
  await withTwoInstances('b', async (a, b, prefix) => {
    await b.increment('quiet');
    await b.sync();
    // make the shared row recognisable: if b rewrote it at the next sync, hits would come back as b's 1 + 0 and the marker would be lost
    await db('rate_limit_windows').where({ key: `${prefix}quiet` }).update({ hits: 41 });
    await b.sync(); // 'quiet' was not used on b since the last sync: no upsert, so b still believes 1 hit
    assert.equal((await b.get('quiet')).totalHits, 1);
    await b.sync(); // now it was used (get): the upsert reads back the shared total
    assert.equal((await b.get('quiet')).totalHits, 41);
    for (let i = 0; i < 2; i++) await a.increment('quiet');
    await a.sync();
    await b.get('quiet');
    await b.sync();
    assert.equal((await b.get('quiet')).totalHits, 43);
  });
});
