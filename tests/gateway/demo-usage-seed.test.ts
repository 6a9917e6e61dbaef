/**
 * The demo group's seeded usage (seeds/007_demo-usage.ts, DESIGN.md §8) shows on its keys: each
 * demo key's "last used" is at least its latest seeded hour, not "never".
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import { createDb } from '../../gateway/db.js';
import { DEMO_KEYS } from '../../seeds/demo-accounts.js';
import { testDatabaseUrl } from '../support/gateway.js';

const db = createDb(testDatabaseUrl(), 2);
after(() => db.destroy());

test('each seeded demo key has a last use no earlier than its latest seeded usage hour', async () => {
  for (const demo of DEMO_KEYS) {
    const key = await db('api_keys').where({ id: demo.id }).first('last_used_at');
    const usage = await db('usage_minutes').where({ api_key_id: demo.id }).max('minute as at').first();
    assert.ok(usage?.at, `seeded usage for ${demo.id}`);
    assert.ok(key?.last_used_at, `${demo.id} has a last use`);
    assert.ok(new Date(key.last_used_at).getTime() >= new Date(usage.at).getTime(), `${demo.id}: last used ${key.last_used_at}, latest usage ${usage.at}`);
  }
});
