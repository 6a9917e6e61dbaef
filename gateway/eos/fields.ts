/**
 * The output fields the EOS endpoints can return, named exactly as the eos library names its
 * output columns (eos/state.ts, eos/invert.ts), with their CGS units. The OpenAPI document and the
 * GraphQL SDL list the same names; tests/gateway/openapi.test.ts checks that they agree.
 */

export const COMPONENTS = ['electrons', 'positrons', 'ions', 'photons', 'coulomb'] as const;
export type Component = (typeof COMPONENTS)[number];

/** Totals of the state (evaluate and invert). */
export const STATE_FIELDS = [
  'pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT',
  'dPdAbar', 'dPdZbar', 'dEdAbar', 'dEdZbar', 'cv', 'cp', 'gamma1', 'gamma3', 'chiRho', 'chiT', 'nablaAd',
  'soundSpeed', 'eta', 'electronDensity', 'positronDensity', 'coulombGamma', 'radiationPressureFraction',
] as const;

/** The inputs as evaluated (composition resolved per point); density and temperature are solved by invert. */
export const INPUT_FIELDS = ['density', 'temperature', 'abar', 'zbar', 'ye'] as const;

/** Per-point convergence information of invert. */
export const INVERT_FIELDS = ['iterations', 'converged'] as const;

/** Per-component columns (breakdown). */
export const COMPONENT_FIELDS = ['pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT'] as const;

/** Normalized Maxwell-relation residuals (on request). */
export const MAXWELL_FIELDS = ['energy', 'entropyT', 'entropyRho'] as const;

export type StateField = (typeof STATE_FIELDS)[number];
export type InputField = (typeof INPUT_FIELDS)[number];
export type InvertField = (typeof INVERT_FIELDS)[number];
export type ComponentField = (typeof COMPONENT_FIELDS)[number];

export const EVALUATE_FIELDS: readonly string[] = [...STATE_FIELDS, ...INPUT_FIELDS];
export const INVERT_OUTPUT_FIELDS: readonly string[] = [...STATE_FIELDS, ...INPUT_FIELDS, ...INVERT_FIELDS];

/** Fields returned when a request names none. */
export const DEFAULT_EVALUATE_FIELDS: readonly string[] = STATE_FIELDS;
export const DEFAULT_INVERT_FIELDS: readonly string[] = ['density', 'temperature', ...STATE_FIELDS, ...INVERT_FIELDS];

export const UNITS: Readonly<Record<string, string>> = {
  pressure: 'erg/cm³',
  specificEnergy: 'erg/g',
  specificEntropy: 'erg/(g·K)',
  dPdRho: 'erg/g (∂P/∂ρ at fixed T)',
  dPdT: 'erg/(cm³·K) (∂P/∂T at fixed ρ)',
  dEdRho: 'erg·cm³/g² (∂e/∂ρ at fixed T)',
  dEdT: 'erg/(g·K) (∂e/∂T at fixed ρ)',
  dSdRho: 'erg·cm³/(g²·K) (∂s/∂ρ at fixed T)',
  dSdT: 'erg/(g·K²) (∂s/∂T at fixed ρ)',
  dPdAbar: 'erg/cm³ per unit Abar',
  dPdZbar: 'erg/cm³ per unit Zbar',
  dEdAbar: 'erg/g per unit Abar',
  dEdZbar: 'erg/g per unit Zbar',
  cv: 'erg/(g·K)',
  cp: 'erg/(g·K)',
  gamma1: 'dimensionless',
  gamma3: 'dimensionless',
  chiRho: 'dimensionless',
  chiT: 'dimensionless',
  nablaAd: 'dimensionless',
  soundSpeed: 'cm/s',
  eta: 'dimensionless ((μ_e − m_e c²)/k_B T)',
  electronDensity: 'cm⁻³',
  positronDensity: 'cm⁻³',
  coulombGamma: 'dimensionless',
  radiationPressureFraction: 'dimensionless (P_rad/P)',
  density: 'g/cm³',
  temperature: 'K',
  abar: 'dimensionless (nucleons per nucleus)',
  zbar: 'dimensionless (charge per nucleus)',
  ye: 'dimensionless (electrons per nucleon)',
  iterations: 'count',
  converged: '1 = converged, 0 = not',
};

/**
 * Parses a binary-form output column name: a top-level field ("pressure"), a component column
 * ("ions.pressure"), a Maxwell residual ("maxwell.energy"), or "warningFlags".
 */
export type ColumnRef =
  | { kind: 'field'; field: string }
  | { kind: 'component'; component: Component; field: ComponentField }
  | { kind: 'maxwell'; field: (typeof MAXWELL_FIELDS)[number] }
  | { kind: 'warningFlags' };

export function parseColumnRef(name: string, allowed: readonly string[]): ColumnRef | undefined {
  if (name === 'warningFlags') return { kind: 'warningFlags' };
  const dot = name.indexOf('.');
  if (dot < 0) return allowed.includes(name) ? { kind: 'field', field: name } : undefined;
  const head = name.slice(0, dot);
  const tail = name.slice(dot + 1);
  if (head === 'maxwell' && (MAXWELL_FIELDS as readonly string[]).includes(tail)) return { kind: 'maxwell', field: tail as (typeof MAXWELL_FIELDS)[number] };
  if ((COMPONENTS as readonly string[]).includes(head) && (COMPONENT_FIELDS as readonly string[]).includes(tail)) {
    return { kind: 'component', component: head as Component, field: tail as ComponentField };
  }
  return undefined;
}

/**
 * Regime classification (eos/regime.ts `RegimeClass`), as columns grouped like the library's
 * object: degeneracy.{class, eta}, relativity.{class, beta, fermiMomentum, x}, pairs.{ratio},
 * radiation.{pressureFraction}, coulomb.{class, gamma}; plus the one-paragraph `summary`.
 */
export const REGIME_GROUPS: Readonly<Record<string, readonly string[]>> = {
  degeneracy: ['class', 'eta'],
  relativity: ['class', 'beta', 'fermiMomentum', 'x'],
  pairs: ['ratio'],
  radiation: ['pressureFraction'],
  coulomb: ['class', 'gamma'],
};
export const REGIME_FIELDS: readonly string[] = [...Object.keys(REGIME_GROUPS), 'summary'];
export const DEFAULT_REGIME_FIELDS: readonly string[] = Object.keys(REGIME_GROUPS);
/** The numeric regime columns (the binary form's choices besides warningFlags). */
export const REGIME_NUMERIC_COLUMNS: readonly string[] = Object.entries(REGIME_GROUPS).flatMap(([group, cols]) =>
  cols.filter((c) => c !== 'class').map((c) => `${group}.${c}`),
);

/** The dotted regime columns a list of regime fields asks for. */
export function regimeColumns(fields: readonly string[]): string[] {
  return fields.flatMap((f) => (f === 'summary' ? ['summary'] : (REGIME_GROUPS[f] ?? []).map((c) => `${f}.${c}`)));
}
