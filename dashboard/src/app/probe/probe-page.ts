import { DOCUMENT } from '@angular/common';
import { ChangeDetectionStrategy, Component, DestroyRef, computed, inject, signal } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import { MatRadioButton, MatRadioGroup } from '@angular/material/radio';
import { MatOptgroup, MatOption, MatSelect } from '@angular/material/select';
import {
  MatCell,
  MatCellDef,
  MatColumnDef,
  MatHeaderCell,
  MatHeaderCellDef,
  MatHeaderRow,
  MatHeaderRowDef,
  MatRow,
  MatRowDef,
  MatTable,
} from '@angular/material/table';
import { ActivatedRoute } from '@angular/router';
import { firstValueFrom, map, merge } from 'rxjs';

import { type Mixture, MixturesApi } from '../core/mixtures-api';
import { problemMessage } from '../core/problem';
import { UnitValuePipe } from '../shared/unit-value';
import { CompositionEditor, nuclideList } from '../shared/composition-editor';
import { EosApi, ProbeKey, eosPath } from './eos-api';
import {
  COMPONENTS,
  DEFAULT_FIELDS,
  INVERSE_PAIRS,
  MIXTURES,
  PICKABLE_FIELDS,
  STATE_FIELDS,
  type ComponentName,
  type EvaluateResponse,
  type InversePairId,
  type Method,
} from './eos-types';
import {
  VARIABLES,
  atLeastOneComponent,
  buildRequest,
  compositionOf,
  listsMatch,
  meanCompositionValidator,
  numberListError,
  numberListValidator,
  selectedComponents,
  type ProbeFormValue,
  type ProbeRequest,
  type Variable,
} from './probe-request';
import { MAX_SHOWN_POINTS, pointNotes, resultRows } from './probe-results';
import { RegimeMap } from './regime-map';
import { Snippets } from './snippets';
import { StateCurves } from './state-curves';

interface ProbeResult {
  request: ProbeRequest;
  response: EvaluateResponse;
}

/** The Probe page (DESIGN.md §7): one request to the EOS API, its answer, its code, and two plots. */
@Component({
  selector: 'fw-probe-page',
  imports: [
    ReactiveFormsModule,
    UnitValuePipe,
    CompositionEditor,
    Snippets,
    RegimeMap,
    StateCurves,
    MatButton,
    MatIconButton,
    MatButtonToggleGroup,
    MatButtonToggle,
    MatCheckbox,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatIcon,
    MatInput,
    MatProgressSpinner,
    MatRadioGroup,
    MatRadioButton,
    MatSelect,
    MatOptgroup,
    MatOption,
    MatTable,
    MatColumnDef,
    MatHeaderCell,
    MatHeaderCellDef,
    MatCell,
    MatCellDef,
    MatHeaderRow,
    MatHeaderRowDef,
    MatRow,
    MatRowDef,
  ],
  templateUrl: './probe-page.html',
  styleUrl: './probe-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ProbePage {
  private readonly api = inject(EosApi);
  private readonly probeKey = inject(ProbeKey);
  private readonly document = inject(DOCUMENT);
  private readonly mixturesApi = inject(MixturesApi);
  private readonly route = inject(ActivatedRoute);

  readonly mixtures = MIXTURES;
  /** The organisation's saved mixtures (Mixtures page), offered beside the built-in ones. */
  readonly savedMixtures = signal<readonly Mixture[]>([]);
  readonly pairs = INVERSE_PAIRS;
  readonly componentNames = COMPONENTS;
  readonly pickableFields = PICKABLE_FIELDS.map((f) => ({ id: f, label: STATE_FIELDS[f].label }));
  readonly variables = VARIABLES;

  readonly form = new FormGroup({
    apiKey: new FormControl(this.probeKey.secret(), { nonNullable: true, validators: [Validators.required, Validators.pattern(/^\S+$/)] }),
    mode: new FormControl<'forward' | 'inverse'>('forward', { nonNullable: true }),
    density: new FormControl('1e6, 1e7', { nonNullable: true, validators: numberListValidator('density') }),
    temperature: new FormControl('1e8', { nonNullable: true, validators: numberListValidator('temperature') }),
    pair: new FormControl<InversePairId>('density-energy', { nonNullable: true }),
    first: new FormControl('1e6, 1e7', { nonNullable: true, validators: numberListValidator('density') }),
    second: new FormControl('1e17, 2e17', { nonNullable: true, validators: numberListValidator('specificEnergy') }),
    compositionKind: new FormControl<'mixture' | 'mean' | 'nuclides'>('mixture', { nonNullable: true }),
    mixture: new FormControl('c12-o16', { nonNullable: true, validators: Validators.required }),
    mean: new FormGroup(
      {
        abar: new FormControl<number | null>(12, [Validators.required, Validators.min(1), Validators.max(300)]),
        zbar: new FormControl<number | null>(6, [Validators.required, Validators.min(1), Validators.max(120)]),
      },
      { validators: meanCompositionValidator },
    ),
    nuclides: nuclideList(),
    components: new FormGroup(
      Object.fromEntries(COMPONENTS.map((c) => [c, new FormControl(true, { nonNullable: true })])) as Record<ComponentName, FormControl<boolean>>,
      { validators: atLeastOneComponent },
    ),
    method: new FormControl<Method>('exact', { nonNullable: true }),
    fields: new FormControl<string[]>(DEFAULT_FIELDS, { nonNullable: true, validators: Validators.required }),
    breakdown: new FormControl(false, { nonNullable: true }),
  });

  readonly showKey = signal(false);
  readonly loading = signal(false);
  readonly error = signal('');
  readonly result = signal<ProbeResult | null>(null);

  /** The form's value and validity as signals (the snippets and plots follow them live). */
  private readonly formState = toSignal(
    merge(this.form.valueChanges, this.form.statusChanges).pipe(map(() => this.snapshot())),
    { initialValue: this.snapshot() },
  );
  readonly value = computed(() => this.formState().value);
  readonly valid = computed(() => this.formState().valid);
  readonly mode = computed(() => this.value().mode);
  readonly compositionKind = computed(() => this.value().compositionKind);
  readonly pair = computed(() => INVERSE_PAIRS.find((p) => p.id === this.value().pair) ?? INVERSE_PAIRS[0]);
  readonly listsMismatch = computed(() => {
    const v = this.value();
    return v.mode === 'forward' ? !listsMatch(v.density, v.temperature) : !listsMatch(v.first, v.second);
  });
  /** The request the form describes, key or not (a valid form has a valid request). */
  private readonly draft = computed(() => (this.formState().requestValid && !this.listsMismatch() ? buildRequest(this.value()) : null));
  /** What Send posts: the draft once the key is there too. */
  readonly request = computed(() => (this.valid() ? this.draft() : null));
  /** The snippets read the key from $FERMIWELL_KEY, so they follow the draft alone: no pasted key needed. */
  readonly snippetRequest = computed(() => {
    const request = this.draft();
    return request ? { url: `${this.document.location?.origin ?? ''}${eosPath(request.operation)}`, body: request.body } : null;
  });
  readonly composition = computed(() => (this.compositionValid() ? compositionOf(this.value()) : null));
  readonly components = computed(() => selectedComponents(this.value()));
  readonly apiKey = computed(() => {
    // read the form signal first: a computed that returns before reading a signal never updates
    const { apiKey } = this.value();
    return this.form.controls.apiKey.valid ? apiKey : '';
  });

  readonly rows = computed(() => {
    const result = this.result();
    return result ? resultRows(result.response) : [];
  });
  readonly notes = computed(() => {
    const result = this.result();
    return result ? pointNotes(result.response) : [];
  });
  readonly pointColumns = computed(() => {
    const n = Math.min(this.result()?.response.status.length ?? 0, MAX_SHOWN_POINTS);
    return Array.from({ length: n }, (_, i) => `p${i}`);
  });
  readonly displayedColumns = computed(() => ['quantity', ...this.pointColumns()]);
  readonly hiddenPoints = computed(() => Math.max(0, (this.result()?.response.status.length ?? 0) - MAX_SHOWN_POINTS));
  /** States to mark on the regime map: the answer's density and temperature, else the forward inputs. */
  readonly markedPoints = computed(() => {
    const values = this.result()?.response.values;
    if (values?.['density'] && values['temperature']) {
      return values['density'].flatMap((rho, i) => {
        const t = values['temperature'][i];
        return rho !== null && t !== null ? [{ density: rho, temperature: t }] : [];
      });
    }
    return [];
  });

  constructor() {
    const controls = this.form.controls;
    const sync = () => {
      const inverse = controls.mode.value === 'inverse';
      for (const c of [controls.density, controls.temperature]) (inverse ? c.disable : c.enable).call(c, { emitEvent: false });
      for (const c of [controls.pair, controls.first, controls.second]) (inverse ? c.enable : c.disable).call(c, { emitEvent: false });
      const kind = controls.compositionKind.value;
      (kind === 'mixture' ? controls.mixture.enable : controls.mixture.disable).call(controls.mixture, { emitEvent: false });
      (kind === 'mean' ? controls.mean.enable : controls.mean.disable).call(controls.mean, { emitEvent: false });
      (kind === 'nuclides' ? controls.nuclides.enable : controls.nuclides.disable).call(controls.nuclides, { emitEvent: false });
      this.form.updateValueAndValidity();
    };
    const syncPair = () => {
      const given = (INVERSE_PAIRS.find((p) => p.id === controls.pair.value) ?? INVERSE_PAIRS[0]).given as readonly Variable[];
      controls.first.setValidators(numberListValidator(given[0]));
      controls.second.setValidators(numberListValidator(given[1]));
      controls.first.updateValueAndValidity();
      controls.second.updateValueAndValidity();
    };
    // /probe?mixture=<id>: the Mixtures page's "Try in the Probe"
    const asked = this.route.snapshot.queryParamMap.get('mixture');
    if (asked) {
      controls.compositionKind.setValue('mixture', { emitEvent: false });
      controls.mixture.setValue(asked, { emitEvent: false });
    }
    sync();
    this.mixturesApi.list().subscribe({
      next: (list) => this.savedMixtures.set(list.filter((m) => !m.builtin)),
      // without the list the built-in mixtures still work; the Mixtures page shows the error
      error: () => this.savedMixtures.set([]),
    });
    const subs = [
      controls.mode.valueChanges.subscribe(sync),
      controls.compositionKind.valueChanges.subscribe(sync),
      controls.pair.valueChanges.subscribe(syncPair),
      controls.apiKey.valueChanges.subscribe((key) => this.probeKey.secret.set(key)),
    ];
    inject(DestroyRef).onDestroy(() => subs.forEach((s) => s.unsubscribe()));
  }

  private snapshot(): { value: ProbeFormValue & { apiKey: string }; valid: boolean; requestValid: boolean } {
    const raw = this.form.getRawValue();
    return {
      value: { ...raw, abar: raw.mean.abar, zbar: raw.mean.zbar } as ProbeFormValue & { apiKey: string },
      valid: this.form.valid,
      // everything but the key (disabled controls, not part of this request, count as fine): what the snippets need
      requestValid: Object.entries(this.form.controls).every(([name, control]) => name === 'apiKey' || !control.invalid),
    };
  }

  private compositionValid(): boolean {
    const c = this.form.controls;
    this.formState();
    switch (c.compositionKind.value) {
      case 'mixture':
        return c.mixture.valid;
      case 'mean':
        return c.mean.valid;
      case 'nuclides':
        return c.nuclides.valid;
    }
  }

  listError(control: 'density' | 'temperature' | 'first' | 'second'): string {
    const variable: Variable =
      control === 'first' ? (this.pair().given[0] as Variable) : control === 'second' ? (this.pair().given[1] as Variable) : control;
    return numberListError(this.form.controls[control].errors, variable);
  }

  variableOf(index: 0 | 1): { label: string; unit: string } {
    return VARIABLES[this.pair().given[index] as Variable];
  }

  async send(): Promise<void> {
    this.form.markAllAsTouched();
    const request = this.request();
    if (!request || this.loading()) return;
    this.loading.set(true);
    this.error.set('');
    try {
      const key = this.form.controls.apiKey.value;
      const response = await firstValueFrom(
        request.operation === 'evaluate' ? this.api.evaluate(key, request.body) : this.api.invert(key, request.body),
      );
      this.result.set({ request, response });
    } catch (error) {
      this.result.set(null);
      this.error.set(problemMessage(error));
    } finally {
      this.loading.set(false);
    }
  }
}
