/**
 * The demo scenario's people (DESIGN.md §8). Everyone here is invented: the "Harrowgate Nuclear
 * Astrophysics Group" at the "Pellworth Institute" does not exist, and the addresses use the
 * reserved example domain (RFC 2606). The passwords are printed by `npm start` and in the README;
 * they are for the local demo only.
 */
import type { Knex } from 'knex';

/** A demo time, (days, hours) before the seeding, as SQL: every demo seed dates its rows with it so they tell one story. */
export function demoAgo(knex: Knex, [days, hours]: readonly [number, number]): Knex.Raw {
  return knex.raw(`now() - (? * interval '1 day') - (? * interval '1 hour')`, [days, hours]);
}
export const DEMO_ORGANISATION = {
  name: 'Harrowgate Nuclear Astrophysics Group (Pellworth Institute)',
  slug: 'harrowgate',
} as const;

export interface DemoUser {
  email: string;
  displayName: string;
  password: string;
  role: 'owner' | 'maintainer' | 'developer' | 'viewer' | null;
  platformRole: 'operator' | null;
  /** When the account and its membership were made, as (days, hours) before the seeding; the audit log's entries agree. */
  joinedAgo: readonly [number, number];
}

export const DEMO_USERS: readonly DemoUser[] = [
  { email: 'imogen.thursby@harrowgate.example', displayName: 'Imogen Thursby', password: 'helium-shell-owner', role: 'owner', platformRole: null, joinedAgo: [61, 0] },
  { email: 'tobias.renwick@harrowgate.example', displayName: 'Tobias Renwick', password: 'detonation-maint', role: 'maintainer', platformRole: null, joinedAgo: [60, 20] },
  { email: 'mira.castellane@harrowgate.example', displayName: 'Mira Castellane', password: 'carbon-oxygen-dev', role: 'developer', platformRole: null, joinedAgo: [60, 2] },
  { email: 'jonah.peverell@harrowgate.example', displayName: 'Jonah Peverell', password: 'white-dwarf-view', role: 'viewer', platformRole: null, joinedAgo: [45, 0] },
  { email: 'operator@fermiwell.example', displayName: 'Fermiwell Operator', password: 'operator-console', role: null, platformRole: 'operator', joinedAgo: [90, 0] },
];

/**
 * The demo group's two API keys. Their secrets are fixed so `npm start` can print a working key;
 * they exist only in the local demo database.
 */
export const DEMO_KEYS = [
  {
    id: 'hgdemo01',
    secret: 'aUGk4tYMfu4AzlI4l1C8acWDp3Cf8e8b',
    name: 'detonation-runs (cluster)',
    scopes: ['eos:evaluate', 'jobs:write', 'usage:read'],
    createdBy: 'tobias.renwick@harrowgate.example',
    createdAgo: [60, 18],
  },
  {
    id: 'hgdemo02',
    secret: 'GpQk3HZMNp7R0LG1rOnhqS1Zj9JBHi3N',
    name: 'analysis notebook',
    scopes: ['eos:evaluate', 'usage:read'],
    createdBy: 'mira.castellane@harrowgate.example',
    createdAgo: [60, 1],
  },
] as const;

export const demoToken = (key: (typeof DEMO_KEYS)[number]) => `fwk_${key.id}_${key.secret}`;
