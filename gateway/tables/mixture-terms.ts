/**
 * The optional part of a table build for one fixed mixture: the ion (classical ideal gas) and
 * Coulomb (one-component plasma) terms of the EOS on the table's nodes, so a code can add them to
 * the interpolated pair gas without evaluating them itself. They come from the same EOS service
 * and worker pool as POST /v1/eos/evaluate with `"components": ["ions", "coulomb"]` (physics and
 * sources in eos/ions.ts and eos/coulomb.ts), at ρ = (ρYe)/Ye for each density node.
 *
 * Added to the table file as the group `/ions_coulomb`: attributes abar, zbar, ye and composition
 * (JSON); datasets log_density (float64 [n_density], log10 ρ in g/cm³) and pressure [erg/cm³],
 * specific_energy [erg/g], specific_entropy [erg/(g·K)] (float64 [n_density, n_temperature]),
 * each with a `units` attribute. Points where the model refuses (status ≠ 0) hold NaN.
 */
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';
import { nodeLogDensityYe, nodeLogTemperature } from '../../eos/free-energy-table.js';
import type { EosService } from '../eos/service.js';
import { h5 } from '../jobs/hdf5.js';

export interface FixedMixture {
  /** The composition as resolved at request time: { abar, zbar } or { nuclides, normalize }. */
  composition: Record<string, unknown>;
  abar: number;
  zbar: number;
  ye: number;
  /** The name the request used (built-in or saved mixture), if any. */
  name: string | null;
}

const UNLIMITED = { plan: 'table', pointsPerMonth: Number.POSITIVE_INFINITY, requestsPerSecond: Number.POSITIVE_INFINITY, maxBatch: Number.POSITIVE_INFINITY, tableBuildsPerMonth: null };

export async function addMixtureTerms(file: string, table: FreeEnergyTable, mixture: FixedMixture, eos: EosService): Promise<void> {
  const { nD, nT, grid } = table;
  const n = nD * nT;
  const density = new Float64Array(n);
  const temperature = new Float64Array(n);
  const logDensity = new Float64Array(nD);
  for (let i = 0; i < nD; i++) {
    logDensity[i] = nodeLogDensityYe(grid, i) - Math.log10(mixture.ye);
    for (let j = 0; j < nT; j++) {
      density[i * nT + j] = 10 ** logDensity[i]!;
      temperature[i * nT + j] = 10 ** nodeLogTemperature(grid, j);
    }
  }
  const batch = await eos.prepare(
    'evaluate',
    { density, temperature, composition: mixture.composition as never, components: ['ions', 'coulomb'], fields: ['pressure', 'specificEnergy', 'specificEntropy'], method: 'exact' },
    UNLIMITED,
  );
  const answer = await eos.run(batch, 'typed');
  const column = (name: string) => {
    const v = answer.fields[name] as Float64Array;
    const out = Float64Array.from(v);
    for (let k = 0; k < n; k++) if (answer.status[k] !== 0) out[k] = NaN;
    return out;
  };
  const lib = await h5();
  const f = new lib.File(file, 'a');
  try {
    const g = f.create_group('ions_coulomb');
    g.create_attribute('description', 'ion ideal-gas + Coulomb (OCP) terms for the fixed mixture at rho = rho*Ye / ye on the table nodes; add them to the pair gas and photons for the total');
    g.create_attribute('abar', mixture.abar);
    g.create_attribute('zbar', mixture.zbar);
    g.create_attribute('ye', mixture.ye);
    g.create_attribute('composition', JSON.stringify(mixture.composition));
    g.create_attribute('mixture_name', mixture.name ?? '');
    g.create_dataset({ name: 'log_density', data: logDensity, shape: [nD], dtype: '<d' }).create_attribute('units', 'log10 g/cm^3');
    const units: Record<string, string> = { pressure: 'erg/cm^3', specificEnergy: 'erg/g', specificEntropy: 'erg/(g K)' };
    const names: Record<string, string> = { pressure: 'pressure', specificEnergy: 'specific_energy', specificEntropy: 'specific_entropy' };
    for (const field of Object.keys(names)) {
      g.create_dataset({ name: names[field]!, data: column(field), shape: [nD, nT], dtype: '<d' }).create_attribute('units', units[field]!);
    }
  } finally {
    f.close();
  }
}
