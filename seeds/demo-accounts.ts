/**
 * The demo scenario's people (DESIGN.md §8). Everyone here is invented: the "Harrowgate Nuclear
 * Astrophysics Group" at the "Pellworth Institute" does not exist, and the addresses use the
 * reserved example domain (RFC 2606). The passwords are printed by `npm start` and in the README;
 * they are for the local demo only.
 */
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
}

export const DEMO_USERS: readonly DemoUser[] = [
  { email: 'imogen.thursby@harrowgate.example', displayName: 'Imogen Thursby', password: 'helium-shell-owner', role: 'owner', platformRole: null },
  { email: 'tobias.renwick@harrowgate.example', displayName: 'Tobias Renwick', password: 'detonation-maint', role: 'maintainer', platformRole: null },
  { email: 'mira.castellane@harrowgate.example', displayName: 'Mira Castellane', password: 'carbon-oxygen-dev', role: 'developer', platformRole: null },
  { email: 'jonah.peverell@harrowgate.example', displayName: 'Jonah Peverell', password: 'white-dwarf-view', role: 'viewer', platformRole: null },
  { email: 'operator@fermiwell.example', displayName: 'Fermiwell Operator', password: 'operator-console', role: null, platformRole: 'operator' },
];
