/**
 * The demo group's saved mixtures (DESIGN.md §8): the compositions its helium-detonation work uses,
 * under the group's own names. Invented labels; the compositions are the usual ones (common
 * practice). Idempotent: a mixture already present by name is left as it is.
 */
import type { Knex } from 'knex';
import { DEMO_ORGANISATION } from './demo-accounts.js';

const MIXTURES = [
  {
    name: 'C/O core 50/50',
    description: 'Carbon–oxygen white-dwarf core, equal mass fractions.',
    nuclides: [
      { nuclide: 'C12', a: 12, z: 6, massFraction: 0.5 },
      { nuclide: 'O16', a: 16, z: 8, massFraction: 0.5 },
    ],
  },
  {
    name: 'Helium shell',
    description: 'Pure helium-4 accreted shell.',
    nuclides: [{ nuclide: 'He4', a: 4, z: 2, massFraction: 1 }],
  },
  {
    name: 'O/Ne/Mg core',
    description: 'Oxygen–neon–magnesium core: 0.60 / 0.30 / 0.10.',
    nuclides: [
      { nuclide: 'O16', a: 16, z: 8, massFraction: 0.6 },
      { nuclide: 'Ne20', a: 20, z: 10, massFraction: 0.3 },
      { nuclide: 'Mg24', a: 24, z: 12, massFraction: 0.1 },
    ],
  },
  {
    name: 'Iron-group ash',
    description: 'Detonation ash taken as pure iron-56.',
    nuclides: [{ nuclide: 'Fe56', a: 56, z: 26, massFraction: 1 }],
  },
  {
    name: 'Ionized H/He envelope',
    description: 'Hydrogen–helium envelope, X = 0.70, Y = 0.30.',
    nuclides: [
      { nuclide: 'H1', a: 1, z: 1, massFraction: 0.7 },
      { nuclide: 'He4', a: 4, z: 2, massFraction: 0.3 },
    ],
  },
];

export async function seed(knex: Knex) {
  const org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first();
  if (!org) return;
  const maintainer = await knex('users').whereRaw('lower(email) = lower(?)', ['tobias.renwick@harrowgate.example']).first();
  for (const mixture of MIXTURES) {
    await knex('mixtures')
      .insert({ organisation_id: org.id, created_by: maintainer?.id ?? null, ...mixture, nuclides: JSON.stringify(mixture.nuclides) })
      .onConflict(['organisation_id', 'name'])
      .ignore();
  }
}
