import { AbstractControl, ValidationErrors, ValidatorFn } from '@angular/forms';

import { compositionStats } from '../shared/composition-editor';
import {
  COMPONENTS,
  INVERSE_PAIRS,
  asColumn,
  parseNumberList,
  type ComponentName,
  type Composition,
  type InversePairId,
  type Method,
  type Nuclide,
} from './eos-types';

/** Most states the Probe sends in one request (bigger batches belong in jobs or code). */
export const PROBE_MAX_POINTS = 1000;

export type Variable = 'density' | 'temperature' | 'pressure' | 'specificEnergy' | 'specificEntropy';

export const VARIABLES: Record<Variable, { label: string; unit: string; min?: number; max?: number; positive: boolean }> = {
  density: { label: 'Density ρ', unit: 'g/cm³', min: 1e-12, max: 1e15, positive: true },
  temperature: { label: 'Temperature T', unit: 'K', min: 1e3, max: 1e13, positive: true },
  pressure: { label: 'Pressure P', unit: 'erg/cm³', positive: true },
  specificEnergy: { label: 'Specific energy e', unit: 'erg/g', positive: false },
  specificEntropy: { label: 'Specific entropy s', unit: 'erg/(g·K)', positive: true },
};

/**
 * A comma (or space) separated list of numbers for one variable: every entry a finite number, within
 * the model's domain where it has one, at most PROBE_MAX_POINTS entries.
 */
export function numberListValidator(variable: Variable): ValidatorFn {
  const spec = VARIABLES[variable];
  return (control: AbstractControl): ValidationErrors | null => {
    const text = String(control.value ?? '').trim();
    if (!text) return { required: true };
    const values = parseNumberList(text);
    if (!values) return { notNumbers: true };
    if (values.length > PROBE_MAX_POINTS) return { tooMany: { max: PROBE_MAX_POINTS } };
    if (spec.positive && values.some((v) => v <= 0)) return { notPositive: true };
    if ((spec.min !== undefined && values.some((v) => v < spec.min!)) || (spec.max !== undefined && values.some((v) => v > spec.max!))) {
      return { outOfDomain: { min: spec.min, max: spec.max } };
    }
    return null;
  };
}

/** Words for a number-list control's error. */
export function numberListError(errors: ValidationErrors | null | undefined, variable: Variable): string {
  if (!errors) return '';
  const spec = VARIABLES[variable];
  if (errors['required']) return 'Required: one number or a comma-separated list.';
  if (errors['notNumbers']) return 'Use numbers like 1e6, 2.5e7 separated by commas.';
  if (errors['tooMany']) return `At most ${PROBE_MAX_POINTS} values here.`;
  if (errors['notPositive']) return 'Values must be positive.';
  if (errors['outOfDomain']) return `The model covers ${spec.min?.toExponential(0)} to ${spec.max?.toExponential(0)} ${spec.unit}.`;
  return '';
}

/** Two lists go together when they have the same length or one of them is a single number. */
export function listsMatch(a: string, b: string): boolean {
  const x = parseNumberList(a);
  const y = parseNumberList(b);
  if (!x || !y) return true; // each control reports its own error
  return x.length === 1 || y.length === 1 || x.length === y.length;
}

/** Abar/Zbar pair validator: 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120). */
export const meanCompositionValidator: ValidatorFn = (group: AbstractControl): ValidationErrors | null => {
  const { abar, zbar } = group.value as { abar: number | null; zbar: number | null };
  if (typeof abar !== 'number' || typeof zbar !== 'number') return null;
  return zbar > Math.min(abar, 120) ? { zbarAboveLimit: true } : null;
};

export const atLeastOneComponent: ValidatorFn = (group: AbstractControl): ValidationErrors | null =>
  Object.values(group.value as Record<string, boolean>).some(Boolean) ? null : { noComponent: true };

export interface ProbeFormValue {
  mode: 'forward' | 'inverse';
  density: string;
  temperature: string;
  pair: InversePairId;
  first: string;
  second: string;
  compositionKind: 'mixture' | 'mean' | 'nuclides';
  mixture: string;
  abar: number | null;
  zbar: number | null;
  nuclides: { a: number | null; z: number | null; massFraction: number | null }[];
  components: Record<ComponentName, boolean>;
  method: Method;
  fields: string[];
  breakdown: boolean;
}

export function compositionOf(v: ProbeFormValue): Composition | null {
  switch (v.compositionKind) {
    case 'mixture':
      return v.mixture ? { mixture: v.mixture } : null;
    case 'mean':
      return typeof v.abar === 'number' && typeof v.zbar === 'number' ? { abar: v.abar, zbar: v.zbar } : null;
    case 'nuclides': {
      const nuclides = v.nuclides.filter(
        (n): n is Nuclide => typeof n.a === 'number' && typeof n.z === 'number' && typeof n.massFraction === 'number',
      );
      return nuclides.length === v.nuclides.length && compositionStats(nuclides) ? { nuclides } : null;
    }
  }
}

export function selectedComponents(v: ProbeFormValue): ComponentName[] {
  return COMPONENTS.filter((c) => v.components[c]);
}

export interface ProbeRequest {
  operation: 'evaluate' | 'invert';
  body: Record<string, unknown>;
}

/** The JSON body the form describes (defaults left out, so the snippets stay short). */
export function buildRequest(v: ProbeFormValue): ProbeRequest | null {
  const composition = compositionOf(v);
  if (!composition) return null;
  const components = selectedComponents(v);
  const extras: Record<string, unknown> = {
    composition,
    ...(components.length < COMPONENTS.length ? { components } : {}),
    ...(v.method !== 'exact' ? { method: v.method } : {}),
  };
  if (v.mode === 'forward') {
    const density = parseNumberList(v.density);
    const temperature = parseNumberList(v.temperature);
    if (!density || !temperature) return null;
    return {
      operation: 'evaluate',
      body: {
        density: asColumn(density),
        temperature: asColumn(temperature),
        ...extras,
        fields: ['density', 'temperature', ...v.fields],
        ...(v.breakdown ? { breakdown: true } : {}),
      },
    };
  }
  const pair = INVERSE_PAIRS.find((p) => p.id === v.pair);
  const first = parseNumberList(v.first);
  const second = parseNumberList(v.second);
  if (!pair || !first || !second) return null;
  return {
    operation: 'invert',
    body: {
      [pair.given[0]]: asColumn(first),
      [pair.given[1]]: asColumn(second),
      ...extras,
      fields: ['density', 'temperature', ...v.fields.filter((f) => f !== 'density' && f !== 'temperature'), 'iterations', 'converged'],
      ...(v.breakdown ? { breakdown: true } : {}),
    },
  };
}
