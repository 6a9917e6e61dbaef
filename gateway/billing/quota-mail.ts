/**
 * Quota e-mails (DESIGN.md §1 journey 3): the owners hear when their organisation has used 80 % of
 * the period's points, and when it has used them all — once per period each, whichever gateway
 * instance sees it first (a row in quota_mail_marks is the claim). "All" means the use reached the
 * quota, or a request was refused over quota with at least 99 % used (a batch rarely lands on the
 * exact last point). Jumping straight past 100 % sends only the 100 % mail. The period is the
 * meter's (usage/meter.ts: the calendar month, UTC).
 *
 * The meter calls `observe` synchronously on every metered request; a local memo keeps that to a
 * map lookup, and the database is asked only when a threshold is newly crossed here.
 */
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { QuotaObserver } from '../usage/meter.js';
import { nextPeriod } from '../usage/meter.js';
import type { BillingService } from './service.js';
import { quotaMail } from './messages.js';
import * as store from './store.js';

type Use = Parameters<QuotaObserver>[0];

export function thresholdOf(use: Pick<Use, 'used' | 'quota' | 'refused'>): 0 | 80 | 100 {
  if (use.quota <= 0) return 0;
  const ratio = use.used / use.quota;
  if (ratio >= 1 || (use.refused && ratio >= 0.99)) return 100;
  return ratio >= 0.8 ? 80 : 0;
}

export class QuotaMails {
  /** `${organisation}|${period}` → the highest threshold already handled here. */
  private readonly handled = new Map<string, number>();

  constructor(
    private readonly db: Knex,
    private readonly billing: () => BillingService | undefined,
    private readonly usageUrl: string,
    private readonly logger: Logger,
  ) {}

  readonly observe: QuotaObserver = (use) => {
    const threshold = thresholdOf(use);
    if (threshold === 0) return;
    const memo = `${use.organisationId}|${use.periodStart}`;
    if ((this.handled.get(memo) ?? 0) >= threshold) return;
    if (this.handled.size > 50_000) this.handled.clear();
    this.handled.set(memo, threshold);
    this.send(use, threshold).catch((error) => {
      this.handled.delete(memo); // try again on the next request
      this.logger.error({ err: error, organisationId: use.organisationId, threshold }, 'quota mail not sent');
    });
  };

  private async send(use: Use, threshold: 80 | 100): Promise<void> {
    const period = new Date(use.periodStart);
    if (threshold === 100) await store.claimQuotaMail(this.db, use.organisationId, period, 80);
    if (!(await store.claimQuotaMail(this.db, use.organisationId, period, threshold))) return;
    const billing = this.billing();
    if (!billing) return;
    const plan = await store.plan(this.db, use.plan);
    await billing.mailOwners(use.organisationId, (_owner, organisationName) =>
      quotaMail({
        organisationName,
        thresholdPercent: threshold,
        planName: plan?.name ?? use.plan,
        used: Math.min(use.used, use.quota),
        quota: use.quota,
        periodEnd: new Date(nextPeriod(use.periodStart)),
        billingUrl: billing.billingUrl,
        usageUrl: this.usageUrl,
      }),
    );
  }
}
