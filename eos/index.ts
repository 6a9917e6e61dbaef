/**
 * Public interface of the Fermiwell equation-of-state library: the equation of state of hot, fully
 * ionized matter (electrons and positrons by exact Fermi–Dirac integrals, ideal ions, photons, ion
 * Coulomb corrections after Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554), its inversions and a
 * regime classification. Units CGS, constants CODATA 2018. See eos/README.md for every formula,
 * source, convention, domain and the accuracy reached (each module states its own in its header).
 */
export { fermiDirac, generalizedFermiDirac } from './fermi-dirac.js';
export {
  evaluate, decodeWarnings, describeWarnings, STATUS, STATUS_TEXT, WARNING, DENSITY_MIN, DENSITY_MAX, TEMPERATURE_MIN,
  TEMPERATURE_MAX, NEUTRON_DRIP_DENSITY, COMPONENT_NAMES,
  type EvaluateOptions, type EvaluateResult, type StateInput, type ComponentName, type ComponentColumns,
  type MaxwellResidualColumns, type StatusCode, type WarningName,
} from './state.js';
export { invert, inverseProblemOf, type InvertInput, type InvertOptions, type InvertResult, type InverseProblem } from './invert.js';
export { classify, classifyPoint, type RegimeClass, type DegeneracyClass, type RelativityClass, type CouplingClass } from './regime.js';
export {
  meanComposition, meanCompositionProblem, resolveComposition, ABAR_MIN, ABAR_MAX, ZBAR_MIN, ZBAR_MAX, MASS_FRACTION_TOLERANCE,
  type Nuclide, type CompositionInput, type MeanComposition, type Column,
} from './composition.js';
export { GAMMA_MELT, MADELUNG_BCC } from './coulomb.js';
export {
  buildFreeEnergyTable, computeTableRows, assembleTable, prepareTable, tablePairGas, accuracySamplePoints, measureErrors,
  summarizeAccuracy, gridSize, validateGrid, resolveGrid, DEFAULT_TABLE_GRID, PAIR_ONSET_BAND, TABLE_COLUMNS, TABLE_FORMAT, TABLE_FORMAT_VERSION, ACCURACY_QUANTITIES,
  type FreeEnergyTable, type TableGrid, type TemperatureBand, type AccuracyReport, type AccuracyStats, type TableColumnName,
} from './free-energy-table.js';
export * as constants from './constants.js';

/**
 * Version of the physics model; changes whenever a published number could change (1.1.0: table
 * method η, ∂P/∂ρ, n₊ from Boltzmann-referenced remainders; denser pair-onset T band. 1.2.0: the
 * table method's loop runs in WebAssembly, whose maths library rounds differently in the last bit).
 * Answers name the method in their own field.
 */
export const MODEL_VERSION = 'fermiwell-eos 1.2.0 (PC2000 liquid OCP; CODATA 2018)';
