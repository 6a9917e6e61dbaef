/**
 * The billing mails, one function each (data in, rendered mail out), in the one Fermiwell layout
 * (gateway/mail/layout.ts): the receipt after a payment, the notice that a payment failed, and
 * the quota warnings at 80 % and 100 % of the period's points.
 */
import { render, type RenderedMail } from '../mail/layout.js';

export const money = (cents: number, currency: string) => `${(cents / 100).toLocaleString('en-GB', { minimumFractionDigits: 2, maximumFractionDigits: 2 })} ${currency.toUpperCase()}`;
const day = (d: Date) => d.toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
const points = (n: number) => n.toLocaleString('en-GB');
const BRAND_NAMES: Record<string, string> = { visa: 'Visa', mastercard: 'Mastercard', amex: 'American Express', discover: 'Discover', jcb: 'JCB', diners: 'Diners Club' };
/** "Visa ending 4242" from the stored brand and last four digits. */
export const cardName = (brand: string | null, last4: string) => `${BRAND_NAMES[brand ?? ''] ?? 'card'} ending ${last4}`;

export function receiptMail(input: {
  organisationName: string;
  invoiceNumber: string;
  planName: string;
  amountCents: number;
  currency: string;
  periodStart: Date | null;
  periodEnd: Date | null;
  card: string | null;
  billingUrl: string;
}): RenderedMail {
  const period = input.periodStart && input.periodEnd ? ` for ${day(input.periodStart)} to ${day(input.periodEnd)}` : '';
  return render({
    subject: `Receipt ${input.invoiceNumber}: ${input.planName} plan for ${input.organisationName}`,
    preview: `${money(input.amountCents, input.currency)} paid${period}.`,
    heading: 'Thank you — payment received',
    paragraphs: [
      `${input.organisationName} paid ${money(input.amountCents, input.currency)} for the ${input.planName} plan${period}${input.card ? `, charged to ${input.card}` : ''}.`,
      `Invoice number: ${input.invoiceNumber}. Every invoice is listed on the Plan & billing page.`,
    ],
    action: { label: 'Open Plan & billing', url: input.billingUrl },
    reason: 'You received this because you are an owner of this organisation on Fermiwell.',
  });
}

export function paymentFailedMail(input: { organisationName: string; planName: string; amountCents: number; currency: string; reason: string; planKept: string; billingUrl: string }): RenderedMail {
  return render({
    subject: `Payment failed for ${input.organisationName} on Fermiwell`,
    preview: `The ${input.planName} plan could not be paid.`,
    heading: 'A payment did not go through',
    paragraphs: [
      `We tried to charge ${money(input.amountCents, input.currency)} for the ${input.planName} plan of ${input.organisationName}, and the card was refused: ${input.reason}.`,
      `${input.planKept} Nothing was charged.`,
      'Add another card on the Plan & billing page and try again.',
    ],
    action: { label: 'Update the card', url: input.billingUrl },
    reason: 'You received this because you are an owner of this organisation on Fermiwell.',
  });
}

export function quotaMail(input: {
  organisationName: string;
  thresholdPercent: 80 | 100;
  planName: string;
  used: number;
  quota: number;
  periodEnd: Date;
  billingUrl: string;
  usageUrl: string;
}): RenderedMail {
  const full = input.thresholdPercent === 100;
  const left = Math.max(0, input.quota - input.used);
  return render({
    subject: full
      ? `${input.organisationName} has used its Fermiwell points for this period`
      : `${input.organisationName} has used 80 % of its Fermiwell points`,
    preview: full ? 'Requests that need more points than are left are refused until the next period.' : `${points(left)} points left until ${day(input.periodEnd)}.`,
    heading: full ? 'Points quota reached' : '80 % of the points quota used',
    paragraphs: [
      `${input.organisationName} has evaluated ${points(input.used)} of the ${points(input.quota)} points the ${input.planName} plan includes this period (until ${day(input.periodEnd)}).`,
      full
        ? 'Requests that need more points than are left are refused with status 429 until the period ends. Nothing half-done is billed.'
        : `${points(left)} points are left. When they run out, requests are refused with status 429 until the period ends.`,
      'A larger plan raises the quota the moment it is active; the Usage page shows where the points went.',
    ],
    action: { label: 'Compare plans', url: input.billingUrl },
    after: [`Usage: ${input.usageUrl}`],
    reason: 'You received this because you are an owner of this organisation on Fermiwell. It is sent once per period for each threshold.',
  });
}
