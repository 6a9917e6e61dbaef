/**
 * Metering: requests, points, errors and latency per organisation, key, endpoint and minute.
 * Counted in memory and written in ONE transaction per flush (every FLUSH_INTERVAL_MS and at
 * shutdown); a failed flush puts its counts back, so nothing is lost while the process lives.
 * A SIGKILL loses at most one flush interval.
 *
 * Quota: a request reserves its points before any work (429 when the month's quota would be
 * passed; nothing computed, nothing billed); the reservation becomes usage on success and is
 * released on failure. The month's use per organisation is read from PostgreSQL (refreshed every
 * QUOTA_REFRESH_MS, right after a flush) plus what this instance has admitted since, so several
 * gateway instances overshoot a quota by at most what the others admit within one refresh.
 */
import type { Knex } from 'knex';
import { ProblemError } from '../shared/problem.js';
import type { ApiKeyContext } from '../keys/types.js';
import { LATENCY_BOUNDS_MS, bucketOf } from './latency-buckets.js';

export const FLUSH_INTERVAL_MS = 1_000;
const QUOTA_REFRESH_MS = 5_000;

interface Cell {
  organisationId: string;
  apiKeyId: string;
  endpoint: string;
  minute: number;
  requests: number;
  points: number;
  errors: number;
  latencyMsSum: number;
  buckets: number[];
}

interface OrgUse {
  /** points used this period per the database at the last refresh, plus unflushed local usage then */
  base: number;
  /** points this instance committed since that refresh */
  committed: number;
  /** points admitted here and not yet settled */
  inFlight: number;
  refreshedAt: number;
  period: number;
}

export interface Ticket {
  /** The request succeeded: its points become usage. */
  succeed(latencyMs: number): void;
  /** The request failed after admission: its points are released, an error is recorded. */
  fail(latencyMs: number): void;
}

/**
 * Told of an organisation's use this period after each admitted request succeeds, and when one is
 * refused over quota (billing/quota-mail.ts sends the 80 % and 100 % mails from it). Synchronous
 * and cheap: the observer does its own I/O later.
 */
export type QuotaObserver = (use: { organisationId: string; plan: string; used: number; quota: number; periodStart: number; refused: boolean }) => void;

export interface MeterStats {
  lastFlushAt: number;
  lastFlushMs: number;
  pendingCells: number;
  flushFailures: number;
}

/** Start of the current calendar month (UTC), the metering period until billing sets its own. */
export function periodStart(now = Date.now()): number {
  const d = new Date(now);
  return Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), 1);
}

export class Meter {
  private pending = new Map<string, Cell>();
  private readonly orgUse = new Map<string, OrgUse>();
  private readonly timer: NodeJS.Timeout;
  private flushing: Promise<void> | undefined;
  private quotaObserver: QuotaObserver | undefined;
  readonly stats: MeterStats = { lastFlushAt: Date.now(), lastFlushMs: 0, pendingCells: 0, flushFailures: 0 };

  constructor(private readonly db: Knex, private readonly onPoints?: (points: number, endpoint: string) => void) {
    this.timer = setInterval(() => void this.flush().catch(() => undefined), FLUSH_INTERVAL_MS);
    this.timer.unref();
  }

  /**
   * Admits a request of `points` points for the key's organisation or throws a 429 problem.
   * Exactly one of succeed/fail must follow. Synchronous while the organisation's use is fresh in
   * memory (almost every request; no promise chain per request), a promise when it is re-read.
   */
  admit(key: ApiKeyContext, endpoint: string, points: number): Ticket | Promise<Ticket> {
    const cached = this.freshUse(key.organisationId);
    if (cached) return this.admitWith(cached, key, endpoint, points);
    return this.useOf(key.organisationId).then((use) => this.admitWith(use, key, endpoint, points));
  }

  private admitWith(use: OrgUse, key: ApiKeyContext, endpoint: string, points: number): Ticket {
    const used = use.base + use.committed + use.inFlight;
    if (used + points > key.limits.pointsPerMonth) {
      const left = Math.max(0, key.limits.pointsPerMonth - used);
      this.record(key.organisationId, key.keyId, endpoint, 0, true, 0);
      this.quotaObserver?.({ organisationId: key.organisationId, plan: key.limits.plan, used, quota: key.limits.pointsPerMonth, periodStart: use.period, refused: true });
      throw new ProblemError(
        'quota-exceeded',
        429,
        'Monthly points quota reached',
        `This request needs ${points} point(s) but the ${key.limits.plan} plan has ${left} of ${key.limits.pointsPerMonth} left this period. Nothing was computed or billed. Upgrade the plan on the Plan & billing page, or wait for the next period (starts ${new Date(nextPeriod(use.period)).toISOString()}).`,
        { pointsRequested: points, pointsLeft: left, quota: key.limits.pointsPerMonth },
      );
    }
    use.inFlight += points;
    let settled = false;
    return {
      succeed: (latencyMs) => {
        if (settled) return;
        settled = true;
        use.inFlight -= points;
        use.committed += points;
        this.record(key.organisationId, key.keyId, endpoint, points, false, latencyMs);
        this.quotaObserver?.({ organisationId: key.organisationId, plan: key.limits.plan, used: use.base + use.committed + use.inFlight, quota: key.limits.pointsPerMonth, periodStart: use.period, refused: false });
      },
      fail: (latencyMs) => {
        if (settled) return;
        settled = true;
        use.inFlight -= points;
        this.record(key.organisationId, key.keyId, endpoint, 0, true, latencyMs);
      },
    };
  }

  /** Registers the one observer of quota use (billing's quota mails). */
  observeQuota(observer: QuotaObserver): void {
    this.quotaObserver = observer;
  }

  /** Records a request that was not admitted (e.g. refused as a bad request). */
  recordRejected(key: ApiKeyContext, endpoint: string, latencyMs: number) {
    this.record(key.organisationId, key.keyId, endpoint, 0, true, latencyMs);
  }

  private record(organisationId: string, apiKeyId: string, endpoint: string, points: number, error: boolean, latencyMs: number) {
    const minute = Math.floor(Date.now() / 60_000) * 60_000;
    const id = `${organisationId}|${apiKeyId}|${endpoint}|${minute}`;
    let cell = this.pending.get(id);
    if (!cell) {
      cell = { organisationId, apiKeyId, endpoint, minute, requests: 0, points: 0, errors: 0, latencyMsSum: 0, buckets: new Array(LATENCY_BOUNDS_MS.length).fill(0) };
      this.pending.set(id, cell);
    }
    cell.requests += 1;
    cell.points += points;
    if (error) cell.errors += 1;
    cell.latencyMsSum += latencyMs;
    cell.buckets[bucketOf(latencyMs)]! += 1;
    if (points > 0) this.onPoints?.(points, endpoint);
  }

  /** The organisation's use when it is of this period and read less than QUOTA_REFRESH_MS ago. */
  private freshUse(organisationId: string): OrgUse | undefined {
    const use = this.orgUse.get(organisationId);
    if (!use) return undefined;
    const now = Date.now();
    return now - use.refreshedAt < QUOTA_REFRESH_MS && use.period === periodStart(now) ? use : undefined;
  }

  private async useOf(organisationId: string): Promise<OrgUse> {
    const now = Date.now();
    const period = periodStart(now);
    let use = this.orgUse.get(organisationId);
    if (use && use.period === period && now - use.refreshedAt < QUOTA_REFRESH_MS) return use;
    if (!use) {
      use = { base: 0, committed: 0, inFlight: 0, refreshedAt: 0, period };
      this.orgUse.set(organisationId, use);
    }
    const row = await this.db('usage_minutes')
      .where('organisation_id', organisationId)
      .andWhere('minute', '>=', new Date(period))
      .sum({ points: 'points' })
      .first();
    // synchronously after the query: what is committed here is either flushed (in the sum) or
    // still pending (added below), so the local committed count starts again from zero
    let unflushed = 0;
    for (const cell of this.pending.values()) if (cell.organisationId === organisationId && cell.minute >= period) unflushed += cell.points;
    use.base = Number(row?.points ?? 0) + unflushed;
    use.committed = 0;
    use.refreshedAt = now;
    use.period = period;
    return use;
  }

  /** Writes all pending cells in one transaction; on failure they are merged back. */
  flush(): Promise<void> {
    if (this.flushing) return this.flushing;
    this.flushing = this.doFlush().finally(() => (this.flushing = undefined));
    return this.flushing;
  }

  private async doFlush() {
    this.stats.pendingCells = this.pending.size;
    if (this.pending.size === 0) {
      this.stats.lastFlushAt = Date.now();
      return;
    }
    const batch = this.pending;
    this.pending = new Map();
    const started = Date.now();
    const rows = [...batch.values()].map((c) => ({
      organisation_id: c.organisationId,
      api_key_id: c.apiKeyId,
      endpoint: c.endpoint,
      minute: new Date(c.minute),
      requests: c.requests,
      points: c.points,
      errors: c.errors,
      latency_ms_sum: c.latencyMsSum,
      latency_buckets: c.buckets,
    }));
    try {
      await this.db.transaction(async (trx) => {
        for (let i = 0; i < rows.length; i += 500) {
          await trx('usage_minutes')
            .insert(rows.slice(i, i + 500))
            .onConflict(['organisation_id', 'api_key_id', 'endpoint', 'minute'])
            .merge({
              requests: trx.raw('usage_minutes.requests + excluded.requests'),
              points: trx.raw('usage_minutes.points + excluded.points'),
              errors: trx.raw('usage_minutes.errors + excluded.errors'),
              latency_ms_sum: trx.raw('usage_minutes.latency_ms_sum + excluded.latency_ms_sum'),
              latency_buckets: trx.raw(
                'ARRAY(SELECT a + b FROM unnest(usage_minutes.latency_buckets, excluded.latency_buckets) AS t(a, b))',
              ),
            });
        }
      });
      this.stats.lastFlushAt = Date.now();
      this.stats.lastFlushMs = this.stats.lastFlushAt - started;
    } catch (error) {
      this.stats.flushFailures += 1;
      for (const [id, cell] of batch) {
        const now = this.pending.get(id);
        if (!now) this.pending.set(id, cell);
        else {
          now.requests += cell.requests;
          now.points += cell.points;
          now.errors += cell.errors;
          now.latencyMsSum += cell.latencyMsSum;
          cell.buckets.forEach((n, i) => (now.buckets[i]! += n));
        }
      }
      throw error;
    }
  }

  /** Seconds since the last successful flush (a /metrics gauge). */
  flushLagSeconds(): number {
    return (Date.now() - this.stats.lastFlushAt) / 1000;
  }

  async close(): Promise<void> {
    clearInterval(this.timer);
    // a few tries: shutdown should not lose usage because of one transient error
    for (let attempt = 0; attempt < 3; attempt++) {
      try {
        await this.flush();
        if (this.pending.size === 0) return;
      } catch {
        await new Promise((r) => setTimeout(r, 200));
      }
    }
  }
}

export function nextPeriod(period: number): number {
  const d = new Date(period);
  return Date.UTC(d.getUTCFullYear(), d.getUTCMonth() + 1, 1);
}
