/**
 * A shared store for express-rate-limit in PostgreSQL. Each instance counts its own hits in memory
 * (exact and free for a single instance) and every SYNC_INTERVAL_MS adds them to one row per
 * (key, window) in `rate_limit_windows`, reading back the total; the hits other instances made are
 * then part of every decision. With N instances a client can exceed its limit by at most what the
 * others admit within one sync interval. Old windows are deleted as they expire. A window is synced
 * only when it was used here since the last sync (its first use after a quiet spell is judged on the
 * others' count of the last sync, then refreshed within one interval), so the work per sync follows
 * the keys in use, not every live window (the 15-minute and 1-hour sign-in windows pile up).
 */
import type { Knex } from 'knex';
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';

const SYNC_INTERVAL_MS = 100;

interface Window {
  start: number;
  /** hits made here in this window */
  mine: number;
  /** of those, already added to the shared row */
  synced: number;
  /** hits made by other instances, as of the last sync */
  others: number;
  /** used (get/increment/decrement) since the last sync */
  touched: boolean;
}

export class PostgresRateLimitStore implements Store {
  localKeys = false;
  prefix: string;
  private windowMs = 1_000;
  private readonly windows = new Map<string, Window>();
  /** Ended windows whose last hits are not in the shared row yet (added at the next sync, so the rows are a complete record). */
  private retired: Array<[string, Window]> = [];
  private timer: NodeJS.Timeout | undefined;
  private syncing: Promise<void> | undefined;
  private nextSync: Promise<void> | undefined;
  syncFailures = 0;

  constructor(private readonly db: Knex, prefix = 'rl:') {
    this.prefix = prefix;
  }

  init(options: Options) {
    this.windowMs = options.windowMs;
    this.timer = setInterval(() => void this.sync().catch(() => (this.syncFailures += 1)), SYNC_INTERVAL_MS);
    this.timer.unref();
  }

  private current(key: string): Window {
    const start = Math.floor(Date.now() / this.windowMs) * this.windowMs;
    let window = this.windows.get(key);
    if (!window || window.start !== start) {
      if (window && window.mine > window.synced) this.retired.push([key, window]);
      window = { start, mine: 0, synced: 0, others: 0, touched: true };
      this.windows.set(key, window);
    }
    window.touched = true;
    return window;
  }

  async get(key: string): Promise<ClientRateLimitInfo> {
    const w = this.current(key);
    return { totalHits: w.mine + w.others, resetTime: new Date(w.start + this.windowMs) };
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const w = this.current(key);
    w.mine += 1;
    return { totalHits: w.mine + w.others, resetTime: new Date(w.start + this.windowMs) };
  }

  async decrement(key: string): Promise<void> {
    const w = this.current(key);
    if (w.mine > 0) w.mine -= 1;
  }

  async resetKey(key: string): Promise<void> {
    this.windows.delete(key);
    await this.db('rate_limit_windows').where({ key: this.prefix + key }).delete();
  }

  /**
   * Adds this instance's new hits to the shared rows and learns the others' counts. When a sync is
   * already running (the timer's), it may have collected its windows before the caller's last use:
   * the caller gets the next sync after it, one shared by every call made meanwhile.
   */
  sync(): Promise<void> {
    if (this.syncing) {
      this.nextSync ??= this.syncing.catch(() => undefined).then(() => {
        this.nextSync = undefined;
        return this.sync();
      });
      return this.nextSync;
    }
    this.syncing = this.doSync().finally(() => (this.syncing = undefined));
    return this.syncing;
  }

  private async doSync() {
    const now = Date.now();
    const due: Array<[string, Window, number]> = [];
    for (const [key, w] of this.retired.splice(0)) due.push([key, w, w.mine - w.synced]);
    for (const [key, w] of this.windows) {
      if (w.start + this.windowMs < now) {
        this.windows.delete(key);
        // its last hits still go into the shared row
        if (w.mine > w.synced) due.push([key, w, w.mine - w.synced]);
        continue;
      }
      if (!w.touched && w.mine === w.synced) continue; // not used here since the last sync
      w.touched = false;
      due.push([key, w, w.mine - w.synced]);
    }
    if (due.length === 0) return;
    const rows = due.map(([key, w, delta]) => ({ key: this.prefix + key, window_start_ms: w.start, hits: delta }));
    const result: Array<{ key: string; window_start_ms: string; hits: number }> = await this.db('rate_limit_windows')
      .insert(rows)
      .onConflict(['key', 'window_start_ms'])
      .merge({ hits: this.db.raw('rate_limit_windows.hits + excluded.hits') })
      .returning(['key', 'window_start_ms', 'hits']);
    const totals = new Map(result.map((r) => [`${r.key}|${r.window_start_ms}`, r.hits]));
    for (const [key, w, delta] of due) {
      w.synced += delta;
      const total = totals.get(`${this.prefix + key}|${w.start}`);
      if (total !== undefined) w.others = Math.max(0, total - w.synced);
    }
    if (Math.random() < 0.05) {
      // only this store's rows, and only windows well past their end (other stores use longer windows)
      await this.db('rate_limit_windows')
        .where('key', 'like', `${this.prefix}%`)
        .andWhere('window_start_ms', '<', now - Math.max(60_000, 2 * this.windowMs))
        .delete();
    }
  }

  async shutdown(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await this.sync().catch(() => undefined);
  }
}
