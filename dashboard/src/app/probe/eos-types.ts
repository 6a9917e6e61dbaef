/** Shapes of the EOS endpoints (schema/openapi.yaml: /v1/eos/evaluate, /v1/eos/invert, /v1/eos/regime). */

export type NumberColumn = number | number[];

export const MIXTURES = [
  { name: 'c12-o16', label: 'Carbon–oxygen (C12 0.5, O16 0.5)' },
  { name: 'he4', label: 'Helium (He4 1.0)' },
  { name: 'o16-ne20-mg24', label: 'Oxygen–neon–magnesium (O16 0.6, Ne20 0.3, Mg24 0.1)' },
  { name: 'fe56', label: 'Iron (Fe56 1.0)' },
  { name: 'h1-he4', label: 'Hydrogen–helium (H1 0.75, He4 0.25)' },
] as const;

export interface Nuclide {
  a: number;
  z: number;
  massFraction: number;
}

export type Composition = { mixture: string } | { abar: number; zbar: number } | { nuclides: Nuclide[] };

export const COMPONENTS = ['electrons', 'positrons', 'ions', 'photons', 'coulomb'] as const;
export type ComponentName = (typeof COMPONENTS)[number];

export type Method = 'exact' | 'table';

/** Output columns with their symbol and CGS unit. */
export const STATE_FIELDS: Record<string, { label: string; unit: string }> = {
  pressure: { label: 'Pressure P', unit: 'erg/cm³' },
  specificEnergy: { label: 'Specific energy e', unit: 'erg/g' },
  specificEntropy: { label: 'Specific entropy s', unit: 'erg/(g·K)' },
  dPdRho: { label: '∂P/∂ρ at fixed T', unit: 'erg/g' },
  dPdT: { label: '∂P/∂T at fixed ρ', unit: 'erg/(cm³·K)' },
  dEdRho: { label: '∂e/∂ρ at fixed T', unit: 'erg·cm³/g²' },
  dEdT: { label: '∂e/∂T at fixed ρ', unit: 'erg/(g·K)' },
  dSdRho: { label: '∂s/∂ρ at fixed T', unit: 'erg·cm³/(g²·K)' },
  dSdT: { label: '∂s/∂T at fixed ρ', unit: 'erg/(g·K²)' },
  dPdAbar: { label: '∂P/∂Abar', unit: 'erg/cm³' },
  dPdZbar: { label: '∂P/∂Zbar', unit: 'erg/cm³' },
  dEdAbar: { label: '∂e/∂Abar', unit: 'erg/g' },
  dEdZbar: { label: '∂e/∂Zbar', unit: 'erg/g' },
  cv: { label: 'Specific heat c_v', unit: 'erg/(g·K)' },
  cp: { label: 'Specific heat c_p', unit: 'erg/(g·K)' },
  gamma1: { label: 'Adiabatic index Γ1', unit: '' },
  gamma3: { label: 'Adiabatic index Γ3', unit: '' },
  chiRho: { label: 'χ_ρ', unit: '' },
  chiT: { label: 'χ_T', unit: '' },
  nablaAd: { label: '∇ad', unit: '' },
  soundSpeed: { label: 'Sound speed', unit: 'cm/s' },
  eta: { label: 'Degeneracy η', unit: '' },
  electronDensity: { label: 'Electron density n₋', unit: 'cm⁻³' },
  positronDensity: { label: 'Positron density n₊', unit: 'cm⁻³' },
  coulombGamma: { label: 'Coulomb coupling Γ', unit: '' },
  radiationPressureFraction: { label: 'Radiation pressure fraction', unit: '' },
  density: { label: 'Density ρ', unit: 'g/cm³' },
  temperature: { label: 'Temperature T', unit: 'K' },
  abar: { label: 'Abar', unit: '' },
  zbar: { label: 'Zbar', unit: '' },
  ye: { label: 'Ye', unit: '' },
  iterations: { label: 'Iterations', unit: '' },
  converged: { label: 'Converged (1 = yes)', unit: '' },
};

/** The state fields a user can pick (StateField in the schema). */
export const PICKABLE_FIELDS = Object.keys(STATE_FIELDS).filter(
  (f) => !['density', 'temperature', 'abar', 'zbar', 'ye', 'iterations', 'converged'].includes(f),
);

export const DEFAULT_FIELDS = ['pressure', 'specificEnergy', 'specificEntropy', 'gamma1', 'soundSpeed', 'eta', 'coulombGamma', 'radiationPressureFraction'];

/** The five inverse problems: the pair of given variables. */
export const INVERSE_PAIRS = [
  { id: 'density-energy', given: ['density', 'specificEnergy'], label: 'Density and specific energy → temperature' },
  { id: 'density-pressure', given: ['density', 'pressure'], label: 'Density and pressure → temperature' },
  { id: 'density-entropy', given: ['density', 'specificEntropy'], label: 'Density and specific entropy → temperature' },
  { id: 'pressure-temperature', given: ['pressure', 'temperature'], label: 'Pressure and temperature → density' },
  { id: 'pressure-entropy', given: ['pressure', 'specificEntropy'], label: 'Pressure and specific entropy → density and temperature' },
] as const;
export type InversePairId = (typeof INVERSE_PAIRS)[number]['id'];

export interface StatusMessage {
  point: number;
  status: number;
  code: string;
  message: string;
}
export interface PointWarning {
  point: number;
  code: string;
  message: string;
}
export interface Meta {
  operation: 'evaluate' | 'invert' | 'regime';
  modelVersion: string;
  constantsSet: string;
  method: Method;
  inverseProblem: string | null;
  points: number;
  components: ComponentName[];
  computeMs: number;
  statusMessageCount: number;
  warningCount: number;
  detailsTruncated: boolean;
}
export type Column = (number | null)[];

export interface EvaluateResponse {
  meta: Meta;
  values: Record<string, Column>;
  components?: Partial<Record<ComponentName, Record<string, Column>>>;
  status: number[];
  warningFlags: number[];
  statusMessages: StatusMessage[];
  warnings: PointWarning[];
}

export interface RegimeResponse {
  meta: Meta;
  values: {
    degeneracy?: { class: (string | null)[]; eta: Column };
    relativity?: { class: (string | null)[]; beta: Column; fermiMomentum: Column; x: Column };
    pairs?: { ratio: Column };
    radiation?: { pressureFraction: Column };
    coulomb?: { class: (string | null)[]; gamma: Column };
  };
  status: number[];
  warningFlags: number[];
  statusMessages: StatusMessage[];
  warnings: PointWarning[];
}

/** Each per-point status code in plain words (PointStatus). */
export const STATUS_WORDS: Record<number, string> = {
  0: 'Computed',
  1: 'An input is not a finite number',
  2: 'Density is not positive',
  3: 'Density outside 10⁻¹²…10¹⁵ g/cm³',
  4: 'Temperature outside 10³…10¹³ K',
  5: 'Composition outside the model (1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120))',
  6: 'Mass fractions invalid (negative or not summing to 1)',
  7: 'Electron–positron balance could not be solved',
  8: 'Outside the table’s grid — use the exact method',
  10: 'Given value not allowed',
  11: 'No solution: the target lies below what the model’s domain reaches',
  12: 'No solution: the target lies above what the model’s domain reaches',
  13: 'Did not converge',
  14: 'Not monotone here: the solution may not be unique',
  20: 'Computed, but an output is not a finite number',
};

/** Physics warning bits (WarningFlags) in plain words. */
export const WARNING_WORDS: [number, string][] = [
  [1, 'Ionization is probably partial, so the full-ionization assumption is doubtful'],
  [2, 'Above neutron drip: nuclear physics is not included'],
  [4, 'Ions are crystallized (Γ above about 175)'],
  [8, 'The Coulomb correction makes the total pressure zero or negative'],
  [16, 'Mechanically unstable (∂P/∂ρ or Γ1·P not positive)'],
  [32, 'Ions behave quantum-mechanically (thermal wavelength exceeds their spacing)'],
];

export function statusWords(status: number): string {
  return STATUS_WORDS[status] ?? `Status ${status}`;
}

export function warningWords(flags: number): string[] {
  return WARNING_WORDS.filter(([bit]) => (flags & bit) !== 0).map(([, words]) => words);
}

/**
 * Parses "1e6, 1e7 2.5e7" into numbers. Returns null when any entry is not a finite number.
 * Separators: commas, semicolons or white space.
 */
export function parseNumberList(text: string): number[] | null {
  const parts = text.split(/[\s,;]+/).filter((p) => p.length > 0);
  if (parts.length === 0) return null;
  const values = parts.map((p) => Number(p));
  return values.every((v) => Number.isFinite(v)) ? values : null;
}

/** One number stays a number (applies to every point); several become a column. */
export function asColumn(values: number[]): NumberColumn {
  return values.length === 1 ? values[0] : values;
}

/** The batch length of a request with these columns (1 when every input is a single number). */
export function batchLength(...columns: number[][]): number {
  return Math.max(1, ...columns.map((c) => c.length));
}
