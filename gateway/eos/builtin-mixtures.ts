/**
 * Built-in mixtures, usable as `composition: { mixture: "<name>" }` (JSON and GraphQL) or
 * `?mixture=<name>` (binary form). Fractions are by mass and sum to exactly 1; A is the mass number
 * (the EOS takes nuclei as A nucleons of one atomic mass unit each). The choices are the common
 * textbook compositions of the objects the product is used for (DESIGN.md §8); the O/Ne/Mg split is
 * our own pick, a typical ONe white-dwarf core. Saved (per-organisation) mixtures arrive with their
 * own feature and are looked up by id, never by these names.
 */

export interface BuiltinNuclide {
  /** Symbol with mass number, for humans (e.g. "C12"). */
  nuclide: string;
  a: number;
  z: number;
  massFraction: number;
}

export interface BuiltinMixture {
  name: string;
  description: string;
  nuclides: readonly BuiltinNuclide[];
}

export const BUILTIN_MIXTURES: readonly BuiltinMixture[] = [
  {
    name: 'c12-o16',
    description: 'Carbon–oxygen white-dwarf matter: C12 and O16, 50/50 by mass.',
    nuclides: [
      { nuclide: 'C12', a: 12, z: 6, massFraction: 0.5 },
      { nuclide: 'O16', a: 16, z: 8, massFraction: 0.5 },
    ],
  },
  {
    name: 'he4',
    description: 'Pure helium-4 (helium shells and detonations).',
    nuclides: [{ nuclide: 'He4', a: 4, z: 2, massFraction: 1 }],
  },
  {
    name: 'o16-ne20-mg24',
    description: 'Oxygen–neon–magnesium white-dwarf core: O16 0.6, Ne20 0.3, Mg24 0.1 by mass.',
    nuclides: [
      { nuclide: 'O16', a: 16, z: 8, massFraction: 0.6 },
      { nuclide: 'Ne20', a: 20, z: 10, massFraction: 0.3 },
      { nuclide: 'Mg24', a: 24, z: 12, massFraction: 0.1 },
    ],
  },
  {
    name: 'fe56',
    description: 'Pure iron-56 (iron cores, nuclear statistical equilibrium ash).',
    nuclides: [{ nuclide: 'Fe56', a: 56, z: 26, massFraction: 1 }],
  },
  {
    name: 'h1-he4',
    description: 'Ionized hydrogen–helium gas: X = 0.75 (H1), Y = 0.25 (He4) by mass.',
    nuclides: [
      { nuclide: 'H1', a: 1, z: 1, massFraction: 0.75 },
      { nuclide: 'He4', a: 4, z: 2, massFraction: 0.25 },
    ],
  },
];

export const BUILTIN_MIXTURE_NAMES: readonly string[] = BUILTIN_MIXTURES.map((m) => m.name);

export function findBuiltinMixture(name: string): BuiltinMixture | undefined {
  return BUILTIN_MIXTURES.find((m) => m.name === name);
}
