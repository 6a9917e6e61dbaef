/** The Plan & billing answers of the gateway (schema/openapi-billing.yaml), as the dashboard reads them. */

export type PlanId = 'free' | 'group' | 'facility';

export interface Plan {
  readonly id: PlanId;
  readonly name: string;
  readonly priceCents: number;
  readonly currency: string;
  readonly pointsPerMonth: number;
  readonly requestsPerSecond: number;
  readonly maxBatch: number;
  /** null = unlimited */
  readonly tableBuildsPerMonth: number | null;
}

export interface BillingSubscription {
  readonly plan: string;
  readonly status: string;
  readonly currentPeriodStart: string;
  readonly currentPeriodEnd: string;
  readonly cancelAtPeriodEnd: boolean;
  readonly scheduledPlan: string | null;
  readonly atProvider: boolean;
}

export interface Card {
  readonly brand: string;
  readonly last4: string;
  readonly expMonth: number;
  readonly expYear: number;
}

export interface TestCard {
  readonly number: string;
  readonly label: string;
  readonly outcome: 'succeeds' | 'declined' | 'charge-fails';
}

export interface BillingOverview {
  readonly organisationId: string;
  readonly plan: Plan;
  readonly subscription: BillingSubscription | null;
  readonly card: Card | null;
  readonly testMode: boolean;
  readonly testCards: readonly TestCard[];
  readonly plans: readonly Plan[];
  readonly changePolicy: { readonly upgrade: 'now'; readonly downgrade: 'period-end' };
}

export interface Invoice {
  readonly id: string;
  readonly number: string;
  readonly source: 'provider' | 'fermiwell';
  readonly plan: string | null;
  readonly description: string;
  readonly amountCents: number;
  readonly currency: string;
  readonly status: string;
  readonly periodStart: string | null;
  readonly periodEnd: string | null;
  readonly paidAt: string | null;
  readonly createdAt: string;
}

export interface PlanChange {
  readonly from: string;
  readonly to: string;
  readonly effective: 'now' | 'period-end' | 'none';
  readonly effectiveAt: string;
  readonly invoice: Invoice | null;
}

export interface TestCardEntry {
  readonly number: string;
  readonly expMonth: number;
  readonly expYear: number;
  readonly cvc: string;
}

/** "49.00 USD" from cents. */
export function money(cents: number, currency: string): string {
  return `${(cents / 100).toLocaleString('en-GB', { minimumFractionDigits: 2, maximumFractionDigits: 2 })} ${currency.toUpperCase()}`;
}

/** "20 billion", "500 million", "10,000": plan limits read at a glance. */
export function count(n: number): string {
  if (n >= 1e9 && n % 1e9 === 0) return `${(n / 1e9).toLocaleString('en-GB')} billion`;
  if (n >= 1e6 && n % 1e6 === 0) return `${(n / 1e6).toLocaleString('en-GB')} million`;
  return n.toLocaleString('en-GB');
}

const BRANDS: Record<string, string> = { visa: 'Visa', mastercard: 'Mastercard', amex: 'American Express', discover: 'Discover', jcb: 'JCB', diners: 'Diners Club' };

/** "Visa ending 4242" */
export function cardLabel(card: Pick<Card, 'brand' | 'last4'>): string {
  return `${BRANDS[card.brand] ?? 'Card'} ending ${card.last4}`;
}

/** "2 Jan 2027" (UTC: periods are UTC instants). */
export function day(isoDate: string): string {
  return new Date(isoDate).toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });
}
