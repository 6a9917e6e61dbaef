import {
  ChangeDetectionStrategy,
  Component,
  PendingTasks,
  computed,
  effect,
  inject,
  signal,
  untracked,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatSnackBar } from '@angular/material/snack-bar';
import { firstValueFrom } from 'rxjs';

import { ApiClient } from '../core/api-client';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { confirmAction } from '../shared/confirm-dialog';
import { BillingApi } from './billing-api';
import { type BillingOverview, type Invoice, type Plan, type TestCardEntry, cardLabel, count, day, money } from './billing-types';
import { CardForm } from './card-form';

/** What choosing a plan would do, in words, for its button and its confirmation. */
export interface PlanAction {
  readonly kind: 'current' | 'upgrade' | 'downgrade' | 'cancel' | 'keep';
  readonly label: string;
}

/**
 * The Plan & billing page (DESIGN.md §7): the plans side by side with their limits, the current
 * plan and period, the card (test mode), plan changes behind a confirmation that says when they
 * take effect and what is charged, and the invoices. Everyone in the organisation reads it; only
 * owners (`billing.manage`) see the buttons — the gateway decides in the end.
 */
@Component({
  selector: 'fw-billing-page',
  imports: [CardForm, MatButton, MatIcon, MatProgressSpinner],
  templateUrl: './billing-page.html',
  styleUrl: './billing-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BillingPage {
  private readonly session = inject(AuthSession);
  private readonly billingApi = inject(BillingApi);
  private readonly api = inject(ApiClient);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly pendingTasks = inject(PendingTasks);

  protected readonly loading = signal(true);
  protected readonly error = signal('');
  protected readonly overview = signal<BillingOverview | null>(null);
  protected readonly invoices = signal<readonly Invoice[]>([]);
  protected readonly actions = signal<readonly string[]>([]);
  protected readonly busyPlan = signal<string | null>(null);
  protected readonly cardBusy = signal(false);
  protected readonly cardError = signal('');
  protected readonly cardSaved = signal(0);

  protected readonly canManage = computed(() => this.actions().includes('billing.manage'));
  protected readonly current = computed(() => this.overview()?.plan ?? null);
  protected readonly scheduled = computed(() => {
    const sub = this.overview()?.subscription;
    if (!sub?.scheduledPlan) return null;
    const plan = this.overview()?.plans.find((p) => p.id === sub.scheduledPlan);
    return { name: plan?.name ?? sub.scheduledPlan, at: day(sub.currentPeriodEnd) };
  });

  protected readonly money = money;
  protected readonly count = count;
  protected readonly day = day;
  protected readonly cardLabel = cardLabel;

  constructor() {
    effect(() => {
      const organisationId = this.session.organisationId();
      untracked(() => void this.load(organisationId));
    });
  }

  protected async load(organisationId = this.session.organisationId()): Promise<void> {
    if (!organisationId) return;
    this.loading.set(true);
    this.error.set('');
    const done = this.pendingTasks.add();
    try {
      const [overview, invoices, permissions] = await Promise.all([
        firstValueFrom(this.billingApi.overview(organisationId)),
        firstValueFrom(this.billingApi.invoices(organisationId)),
        firstValueFrom(this.api.permissions(organisationId)),
      ]);
      if (organisationId !== this.session.organisationId()) return;
      this.overview.set(overview);
      this.invoices.set(invoices);
      this.actions.set(permissions.actions);
    } catch (error) {
      this.error.set(problemMessage(error, 'Plan & billing could not be loaded.'));
    } finally {
      this.loading.set(false);
      done();
    }
  }

  /** What the button of `plan` does, given the current plan and any scheduled change. */
  protected actionFor(plan: Plan): PlanAction {
    const view = this.overview()!;
    const current = view.plan;
    const scheduled = view.subscription?.scheduledPlan ?? null;
    if (plan.id === current.id) {
      return scheduled ? { kind: 'keep', label: `Keep ${plan.name}` } : { kind: 'current', label: 'Current plan' };
    }
    if (plan.id === scheduled) return { kind: 'current', label: `From ${day(view.subscription!.currentPeriodEnd)}` };
    if (plan.priceCents > current.priceCents) return { kind: 'upgrade', label: `Upgrade to ${plan.name}` };
    if (plan.priceCents === 0) return { kind: 'cancel', label: 'Cancel and move to Free' };
    return { kind: 'downgrade', label: `Move to ${plan.name}` };
  }

  /** The confirmation text: when it takes effect, what is charged, what happens to the limits. */
  protected confirmation(plan: Plan, action: PlanAction): { title: string; message: string; confirm: string; destructive: boolean } {
    const view = this.overview()!;
    const current = view.plan;
    const periodEnd = view.subscription ? day(view.subscription.currentPeriodEnd) : null;
    switch (action.kind) {
      case 'upgrade':
        return {
          title: `Upgrade to ${plan.name}?`,
          message:
            `${view.card ? `Your ${cardLabel(view.card)}` : 'Your card'} is charged ${money(plan.priceCents, plan.currency)} now, ` +
            `and a new monthly period starts today. The ${plan.name} limits apply at once: ${count(plan.pointsPerMonth)} points a month, ` +
            `${count(plan.maxBatch)} points per batch, ${count(plan.requestsPerSecond)} requests per second.` +
            (current.priceCents > 0 ? ` The unused part of the ${current.name} period is not credited.` : ''),
          confirm: `Pay ${money(plan.priceCents, plan.currency)} and upgrade`,
          destructive: false,
        };
      case 'downgrade':
        return {
          title: `Move to ${plan.name}?`,
          message:
            `${current.name} stays until the end of the paid period${periodEnd ? ` (${periodEnd})` : ''}; from then, ${plan.name} ` +
            `at ${money(plan.priceCents, plan.currency)} a month with its smaller limits. Nothing is charged or refunded now, and you can keep ${current.name} until then.`,
          confirm: `Move to ${plan.name} at period end`,
          destructive: false,
        };
      case 'cancel':
        return {
          title: `Cancel ${current.name}?`,
          message:
            `${current.name} stays until the end of the paid period${periodEnd ? ` (${periodEnd})` : ''}; then the organisation is on Free ` +
            `(${count(plan.pointsPerMonth)} points a month, ${count(plan.maxBatch)} points per batch). Nothing is refunded. You can keep ${current.name} until then.`,
          confirm: 'Cancel at period end',
          destructive: true,
        };
      default:
        return {
          title: `Keep ${plan.name}?`,
          message: `The scheduled change is withdrawn; ${plan.name} continues and renews as before. Nothing is charged now.`,
          confirm: `Keep ${plan.name}`,
          destructive: false,
        };
    }
  }

  protected async choose(plan: Plan): Promise<void> {
    const organisationId = this.session.organisationId();
    const view = this.overview();
    if (!organisationId || !view) return;
    const action = this.actionFor(plan);
    if (action.kind === 'current') return;
    if (action.kind === 'upgrade' && !view.card) {
      this.snackBar.open(`Add a card first: ${plan.name} is paid at once.`, 'OK', { duration: 6000 });
      document.getElementById('card')?.scrollIntoView({ behavior: 'smooth' });
      return;
    }
    const text = this.confirmation(plan, action);
    if (!(await firstValueFrom(confirmAction(this.dialog, text)))) return;
    this.busyPlan.set(plan.id);
    try {
      const { billing, change } = await firstValueFrom(this.billingApi.changePlan(organisationId, plan.id));
      this.overview.set(billing);
      this.invoices.set(await firstValueFrom(this.billingApi.invoices(organisationId)));
      const message =
        change.effective === 'now'
          ? change.invoice
            ? `${plan.name} is active. ${money(change.invoice.amountCents, change.invoice.currency)} paid; invoice ${change.invoice.number}.`
            : `${billing.plan.name} continues.`
          : change.effective === 'period-end'
            ? `${plan.name} from ${day(change.effectiveAt)}.`
            : 'Nothing to change.';
      this.snackBar.open(message, 'OK', { duration: 8000 });
      void this.session.loadMe().catch(() => undefined); // the plan shown elsewhere in the shell
    } catch (error) {
      this.snackBar.open(problemMessage(error, 'The plan could not be changed.'), 'Dismiss', { duration: 12000 });
    } finally {
      this.busyPlan.set(null);
    }
  }

  protected async saveCard(entry: TestCardEntry): Promise<void> {
    const organisationId = this.session.organisationId();
    if (!organisationId) return;
    this.cardBusy.set(true);
    this.cardError.set('');
    try {
      const card = await firstValueFrom(this.billingApi.setTestCard(organisationId, entry));
      this.overview.update((view) => (view ? { ...view, card } : view));
      this.cardSaved.update((n) => n + 1);
      this.snackBar.open(`${cardLabel(card)} saved.`, 'OK', { duration: 5000 });
    } catch (error) {
      this.cardError.set(problemMessage(error, 'The card could not be saved.'));
    } finally {
      this.cardBusy.set(false);
    }
  }

  protected statusLabel(invoice: Invoice): string {
    return invoice.status === 'open' ? 'unpaid' : invoice.status;
  }
}
