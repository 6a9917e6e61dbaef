import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { provideRouter } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import { fakeSession } from '../shared/testing';
import { BillingPage } from './billing-page';
import type { BillingOverview, Invoice, Plan } from './billing-types';

const BILLING = '/v1/organisations/org-1/billing';
const PERMISSIONS = '/v1/organisations/org-1/permissions';
const OWNER_ACTIONS = ['billing.read', 'billing.manage'];

// the plan values of DESIGN.md §6
const PLANS: Plan[] = [
  { id: 'free', name: 'Free', priceCents: 0, currency: 'usd', pointsPerMonth: 2_000_000, requestsPerSecond: 10, maxBatch: 10_000, tableBuildsPerMonth: 1 },
  { id: 'group', name: 'Group', priceCents: 4_900, currency: 'usd', pointsPerMonth: 500_000_000, requestsPerSecond: 100, maxBatch: 1_000_000, tableBuildsPerMonth: 20 },
  { id: 'facility', name: 'Facility', priceCents: 49_000, currency: 'usd', pointsPerMonth: 20_000_000_000, requestsPerSecond: 1_000, maxBatch: 5_000_000, tableBuildsPerMonth: null },
];

function overview(overrides: Partial<BillingOverview> = {}): BillingOverview {
  return {
    organisationId: 'org-1',
    plan: PLANS[0]!,
    subscription: null,
    card: null,
    testMode: true,
    testCards: [
      { number: '4242424242424242', label: 'Visa', outcome: 'succeeds' },
      { number: '4000000000000002', label: 'Visa, declined', outcome: 'declined' },
    ],
    plans: PLANS,
    changePolicy: { upgrade: 'now', downgrade: 'period-end' },
    ...overrides,
  };
}

const GROUP_SUBSCRIPTION = {
  plan: 'group',
  status: 'active',
  currentPeriodStart: '2026-12-02T10:00:00Z',
  currentPeriodEnd: '2027-01-02T10:00:00Z',
  cancelAtPeriodEnd: false,
  scheduledPlan: null,
  atProvider: true,
};

function invoice(overrides: Partial<Invoice> = {}): Invoice {
  return {
    id: 'inv-1',
    number: 'FW-MERGER-0001',
    source: 'fermiwell',
    plan: 'group',
    description: 'Group plan, 2 Dec 2026 – 2 Jan 2027',
    amountCents: 4_900,
    currency: 'usd',
    status: 'paid',
    periodStart: '2026-12-02T10:00:00Z',
    periodEnd: '2027-01-02T10:00:00Z',
    paidAt: '2026-12-02T10:00:00Z',
    createdAt: '2026-12-02T10:00:00Z',
    ...overrides,
  };
}

describe('BillingPage', () => {
  let backend: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
        { provide: AuthSession, useValue: fakeSession().fake },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
  });

  afterEach(() => {
    document.querySelectorAll('.cdk-overlay-container').forEach((el) => (el.innerHTML = ''));
  });

  async function render(view: BillingOverview, invoices: Invoice[] = [], actions = OWNER_ACTIONS) {
    const fixture = TestBed.createComponent(BillingPage);
    fixture.detectChanges();
    backend.expectOne(BILLING).flush(view);
    backend.expectOne(`${BILLING}/invoices`).flush({ items: invoices });
    backend.expectOne(PERMISSIONS).flush({ role: 'owner', platformRole: null, actions });
    await fixture.whenStable();
    return { fixture, page: fixture.nativeElement as HTMLElement };
  }

  const overlay = () => document.querySelector('.cdk-overlay-container') as HTMLElement;
  const button = (root: ParentNode, text: string) =>
    Array.from(root.querySelectorAll('button')).find((b) => b.textContent?.trim().includes(text)) as HTMLButtonElement | undefined;
  const planCard = (page: HTMLElement, id: string) => page.querySelector(`article[data-plan="${id}"]`) as HTMLElement;

  it('shows the three plans side by side with their limits, and the current plan', async () => {
    const { page } = await render(overview());
    expect(page.querySelectorAll('article.plan').length).toBe(3);
    const facility = planCard(page, 'facility').textContent!;
    expect(facility).toContain('490.00 USD');
    expect(facility).toContain('20 billion');
    expect(facility).toContain('5 million points');
    expect(facility).toContain('unlimited');
    expect(planCard(page, 'free').textContent).toContain('10,000 points');
    expect(planCard(page, 'free').classList).toContain('plan-current');
    expect(planCard(page, 'free').textContent).toContain('Current plan');
    expect(page.querySelector('.current-name')?.textContent).toBe('Free');
    expect(page.textContent).toContain('test mode');
    expect(page.textContent).toContain('No invoices yet.');
  });

  it('shows the period, the card and the invoices of a paid plan', async () => {
    const { page } = await render(
      overview({ plan: PLANS[1]!, subscription: GROUP_SUBSCRIPTION, card: { brand: 'visa', last4: '4242', expMonth: 12, expYear: 2028 } }),
      [invoice()],
    );
    expect(page.querySelector('.period')?.textContent).toContain('Paid period: 2 Dec 2026 – 2 Jan 2027');
    // the quota's own period (calendar months) is named beside the paid one, so the two dates do not read as one
    expect(page.querySelector('.period')?.textContent?.replace(/\s+/g, ' ')).toContain('the points quota resets on the first of every month (UTC)');
    expect(page.querySelector('.card-on-file')?.textContent).toContain('Visa ending 4242, expires 12/2028');
    const row = page.querySelector('tr[data-invoice="FW-MERGER-0001"]')!.textContent!;
    expect(row).toContain('49.00 USD');
    expect(row).toContain('paid');
    expect(row).toContain('recorded by Fermiwell');
  });

  it('gives a viewer no plan or card controls', async () => {
    const { page } = await render(overview(), [], ['billing.read']);
    expect(page.querySelector('button.choose-plan')).toBeNull();
    expect(page.querySelector('fw-card-form')).toBeNull();
    expect(page.textContent).toContain('Only owners of the organisation change the plan or the card.');
  });

  it('upgrading asks first, says what is charged and when, then changes the plan', async () => {
    const card = { brand: 'visa', last4: '4242', expMonth: 12, expYear: 2028 };
    const { fixture, page } = await render(overview({ card }));
    button(planCard(page, 'group'), 'Upgrade to Group')!.click();
    await vi.waitFor(() => expect(overlay().textContent).toContain('Upgrade to Group?'));
    expect(overlay().textContent).toContain('Visa ending 4242 is charged 49.00 USD now');
    expect(overlay().textContent).toContain('apply at once');
    button(overlay(), 'Pay 49.00 USD and upgrade')!.click();
    const put = await vi.waitFor(() => backend.expectOne((r) => r.method === 'PUT' && r.url === `${BILLING}/plan`));
    expect(put.request.body).toEqual({ plan: 'group' });
    put.flush({
      billing: overview({ plan: PLANS[1]!, subscription: GROUP_SUBSCRIPTION, card }),
      change: { from: 'free', to: 'group', effective: 'now', effectiveAt: '2026-12-02T10:00:00Z', invoice: invoice() },
    });
    await vi.waitFor(() => backend.expectOne(`${BILLING}/invoices`).flush({ items: [invoice()] }));
    await fixture.whenStable();
    expect(page.querySelector('.current-name')?.textContent).toBe('Group');
    expect(page.querySelector('tr[data-invoice="FW-MERGER-0001"]')).not.toBeNull();
    expect(planCard(page, 'group').classList).toContain('plan-current');
  });

  it('does not change anything when the confirmation is cancelled', async () => {
    const { page } = await render(overview({ card: { brand: 'visa', last4: '4242', expMonth: 12, expYear: 2028 } }));
    button(planCard(page, 'facility'), 'Upgrade to Facility')!.click();
    await vi.waitFor(() => expect(button(overlay(), 'Cancel')).toBeDefined());
    button(overlay(), 'Cancel')!.click();
    await vi.waitFor(() => expect(overlay().querySelector('fw-confirm-dialog')).toBeNull());
    backend.expectNone((r) => r.method === 'PUT');
  });

  it('a downgrade says it waits for the period end; a scheduled one is shown with a way to keep the plan', async () => {
    const facility = overview({ plan: PLANS[2]!, subscription: { ...GROUP_SUBSCRIPTION, plan: 'facility' }, card: { brand: 'visa', last4: '4242', expMonth: 1, expYear: 2030 } });
    const { fixture, page } = await render(facility);
    expect(planCard(page, 'group').textContent).toContain('Takes effect at the end of the paid period.');
    button(planCard(page, 'group'), 'Move to Group')!.click();
    await vi.waitFor(() => expect(overlay().textContent).toContain('Facility stays until the end of the paid period (2 Jan 2027)'));
    button(overlay(), 'Move to Group at period end')!.click();
    const put = await vi.waitFor(() => backend.expectOne((r) => r.method === 'PUT' && r.url === `${BILLING}/plan`));
    put.flush({
      billing: { ...facility, subscription: { ...facility.subscription!, scheduledPlan: 'group' } },
      change: { from: 'facility', to: 'group', effective: 'period-end', effectiveAt: '2027-01-02T10:00:00Z', invoice: null },
    });
    await vi.waitFor(() => backend.expectOne(`${BILLING}/invoices`).flush({ items: [] }));
    await fixture.whenStable();
    expect(page.querySelector('.scheduled')?.textContent).toContain('Moves to Group on 2 Jan 2027');
    expect(button(planCard(page, 'facility'), 'Keep Facility')).toBeDefined();
    expect(planCard(page, 'group').textContent).toContain('From 2 Jan 2027');
  });

  it('shows the gateway’s problem when a change is refused', async () => {
    const { page } = await render(overview({ card: { brand: 'visa', last4: '0341', expMonth: 1, expYear: 2030 } }));
    button(planCard(page, 'group'), 'Upgrade to Group')!.click();
    await vi.waitFor(() => expect(button(overlay(), 'Pay 49.00 USD and upgrade')).toBeDefined());
    button(overlay(), 'Pay 49.00 USD and upgrade')!.click();
    const put = await vi.waitFor(() => backend.expectOne((r) => r.method === 'PUT'));
    put.flush(
      { type: '/problems/payment-declined', title: 'Card declined', status: 402, detail: 'The card was declined (generic decline): Your card was declined. The plan stays Free. Nothing was charged.' },
      { status: 402, statusText: 'Payment Required' },
    );
    await vi.waitFor(() => expect(overlay().textContent).toContain('The plan stays Free.'));
    expect(page.querySelector('.current-name')?.textContent).toBe('Free');
  });

  it('saves a test card and shows it; a declined card shows why', async () => {
    const { fixture, page } = await render(overview());
    const form = page.querySelector('fw-card-form') as HTMLElement;
    expect(form.textContent).toContain('Test mode');
    button(form.querySelector('tbody tr:nth-child(2)')!, 'Use')!.click();
    await fixture.whenStable();
    (form.querySelector('button.save-card') as HTMLButtonElement).click();
    const declined = await vi.waitFor(() => backend.expectOne((r) => r.method === 'PUT' && r.url === `${BILLING}/card`));
    expect(declined.request.body.number).toBe('4000000000000002');
    declined.flush(
      { type: '/problems/payment-declined', title: 'Card declined', status: 402, detail: 'The card was declined (generic decline). No card was saved.' },
      { status: 402, statusText: 'Payment Required' },
    );
    await fixture.whenStable();
    expect(form.querySelector('.card-error')?.textContent).toContain('No card was saved.');

    button(form.querySelector('tbody tr:nth-child(1)')!, 'Use')!.click();
    await fixture.whenStable();
    (form.querySelector('button.save-card') as HTMLButtonElement).click();
    const saved = await vi.waitFor(() => backend.expectOne((r) => r.method === 'PUT' && r.url === `${BILLING}/card`));
    expect(saved.request.body).toEqual({ number: '4242424242424242', expMonth: 12, expYear: new Date().getFullYear() + 2, cvc: '123' });
    saved.flush({ card: { brand: 'visa', last4: '4242', expMonth: 12, expYear: 2028 } });
    await fixture.whenStable();
    expect(page.querySelector('.card-on-file')?.textContent).toContain('Visa ending 4242');
    expect((form.querySelector('input[formcontrolname="number"]') as HTMLInputElement).value).toBe('');
  });

  it('shows an error state with a way to try again', async () => {
    const fixture = TestBed.createComponent(BillingPage);
    fixture.detectChanges();
    backend.expectOne(BILLING).flush({ type: '/problems/internal', title: 'Internal error', status: 500, detail: 'The request failed on our side.' }, { status: 500, statusText: 'Error' });
    backend.expectOne(`${BILLING}/invoices`).flush({ items: [] });
    backend.expectOne(PERMISSIONS).flush({ role: 'owner', platformRole: null, actions: OWNER_ACTIONS });
    await fixture.whenStable();
    const page = fixture.nativeElement as HTMLElement;
    expect(page.querySelector('.fw-state-error')?.textContent).toContain('The request failed on our side.');
    expect(button(page, 'Try again')).toBeDefined();
  });
});
