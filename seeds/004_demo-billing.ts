/**
 * The demo group's billing (DESIGN.md §8, invented): on the Group plan since two months before the
 * current one, with three paid monthly invoices. Recorded by Fermiwell (source "fermiwell", no
 * subscription at the payment provider: the local fake forgets everything when it stops), so the
 * first change the demo owner makes creates a real subscription at the fake. No card on file: the
 * demo owner enters a test card on the Plan & billing page.
 *
 * Idempotent: seeds only when the organisation has neither a subscription nor invoices, so a
 * second `npm start` keeps whatever the demo owner changed.
 */
import type { Knex } from 'knex';
import { DEMO_ORGANISATION } from './demo-accounts.js';

const monthStart = (year: number, month: number) => new Date(Date.UTC(year, month, 1));
const dayOf = (d: Date) => d.toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

export async function seed(knex: Knex) {
  const org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first('id');
  if (!org) return;
  const hasSubscription = await knex('subscriptions').where({ organisation_id: org.id }).first('organisation_id');
  const hasInvoices = await knex('invoices').where({ organisation_id: org.id }).first('id');
  if (hasSubscription || hasInvoices) return;

  const now = new Date();
  const y = now.getUTCFullYear();
  const m = now.getUTCMonth();
  const group = await knex('plans').where({ id: 'group' }).first('price_cents', 'currency');
  await knex.transaction(async (trx) => {
    await trx('organisations').where({ id: org.id }).update({ plan_id: 'group' });
    await trx('subscriptions').insert({
      organisation_id: org.id,
      plan_id: 'group',
      provider_subscription_id: null,
      status: 'active',
      current_period_start: monthStart(y, m),
      current_period_end: monthStart(y, m + 1),
    });
    for (let k = 2; k >= 0; k--) {
      const start = monthStart(y, m - k);
      const end = monthStart(y, m - k + 1);
      await trx('invoices').insert({
        organisation_id: org.id,
        number: `FW-HARROWGATE-${String(3 - k).padStart(4, '0')}`,
        source: 'fermiwell',
        plan_id: 'group',
        description: `Group plan, ${dayOf(start)} – ${dayOf(end)} (demo data)`,
        amount_cents: group?.price_cents ?? 4_900,
        currency: group?.currency ?? 'usd',
        status: 'paid',
        period_start: start,
        period_end: end,
        paid_at: start,
        created_at: start,
      });
    }
  });
}
