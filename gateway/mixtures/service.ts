/**
 * Saved mixtures (DESIGN.md §7 Mixtures): an organisation's named compositions, listed together
 * with the built-in ones, with Abar, Zbar and Ye computed by the EOS library's own
 * `meanComposition` (eos/composition.ts), so the numbers shown are the numbers the EOS uses.
 *
 * Rules: 1–40 nuclides; A ≥ 1, 0 ≤ Z ≤ A; mass fractions in (0, 1] summing to 1 within the
 * library's MASS_FRACTION_TOLERANCE (or rescaled when `normalize` is sent); names unique in the
 * organisation and never equal to a built-in name, so `{ "mixture": … }` is unambiguous.
 * Reading: every member (mixtures.read) or an API key of the organisation; changing: mixtures.manage.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import * as eos from '../../eos/index.js';
import { ProblemError } from '../shared/problem.js';
import { parse, isUuid } from '../shared/validate.js';
import type { AccessService, Actor } from '../organisations/access.js';
import type { AuditLog } from '../audit/service.js';
import { BUILTIN_MIXTURES, findBuiltinMixture } from '../eos/builtin-mixtures.js';
import { MixtureStore, type MixtureRow, type StoredNuclide } from './store.js';

export const MAX_NUCLIDES = 40;

const nuclide = z
  .object({
    nuclide: z.string().trim().max(16, 'must be at most 16 characters').optional(),
    a: z.number({ error: 'must be a number' }).finite().min(1, 'the mass number A must be at least 1').max(300, 'the mass number A must be at most 300'),
    z: z.number({ error: 'must be a number' }).finite().min(0, 'the charge Z must be at least 0').max(120, 'the charge Z must be at most 120'),
    massFraction: z.number({ error: 'must be a number' }).finite().gt(0, 'must be above 0').max(1, 'must be at most 1'),
  })
  .strict()
  .refine((nu) => nu.z <= nu.a, { message: 'Z must not exceed A (more protons than nucleons)', path: ['z'] });

export const mixtureBody = z
  .object({
    name: z.string().trim().min(1, 'must not be empty').max(80, 'must be at most 80 characters'),
    description: z.string().trim().max(400, 'must be at most 400 characters').default(''),
    nuclides: z.array(nuclide).min(1, 'needs at least one nuclide').max(MAX_NUCLIDES, `at most ${MAX_NUCLIDES} nuclides`),
    normalize: z.boolean().default(false),
  })
  .strict();
export type MixtureInput = z.input<typeof mixtureBody>;

export interface MixtureView {
  id: string;
  name: string;
  description: string;
  builtin: boolean;
  nuclides: StoredNuclide[];
  abar: number;
  zbar: number;
  ye: number;
  createdAt: string | null;
  updatedAt: string | null;
}

/** "C12" from A = 12, Z = 6 when the caller gave no label (symbols of Z = 0…120 are common practice). */
const SYMBOLS =
  'n H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No Lr Rf Db Sg Bh Hs Mt Ds Rg Cn Nh Fl Mc Lv Ts Og Uue Ubn'.split(' ');
export function nuclideLabel(a: number, zCharge: number): string {
  const symbol = Number.isInteger(zCharge) ? SYMBOLS[zCharge] : undefined;
  return symbol && Number.isInteger(a) ? `${symbol}${a}` : `A${a}Z${zCharge}`;
}

function view(row: MixtureRow): MixtureView {
  const mean = eos.meanComposition(row.nuclides);
  return {
    id: row.id,
    name: row.name,
    description: row.description,
    builtin: false,
    nuclides: row.nuclides,
    ...mean,
    createdAt: row.created_at.toISOString(),
    updatedAt: row.updated_at.toISOString(),
  };
}

const BUILTIN_VIEWS: MixtureView[] = BUILTIN_MIXTURES.map((m) => ({
  id: m.name,
  name: m.name,
  description: m.description,
  builtin: true,
  nuclides: m.nuclides.map((nu) => ({ ...nu })),
  ...eos.meanComposition(m.nuclides),
  createdAt: null,
  updatedAt: null,
}));

export function mixtureNotFound(id: string): ProblemError {
  return new ProblemError('mixture-not-found', 404, 'Mixture not found', `There is no mixture "${id}" in this organisation. List them with GET /v1/mixtures; built-in ones are named ${BUILTIN_MIXTURES.map((m) => m.name).join(', ')}.`, { mixture: id });
}

export class MixtureService {
  private readonly store: MixtureStore;

  constructor(
    private readonly db: Knex,
    private readonly access: AccessService,
    private readonly audit: AuditLog,
  ) {
    this.store = new MixtureStore(db);
  }

  /** Built-in mixtures first, then the organisation's saved ones by name. Callers check access first. */
  async listFor(organisationId: string): Promise<MixtureView[]> {
    return [...BUILTIN_VIEWS, ...(await this.store.list(organisationId)).map(view)];
  }

  async list(actor: Actor, organisationId: string): Promise<MixtureView[]> {
    await this.access.require(actor, organisationId, 'mixtures.read');
    return this.listFor(organisationId);
  }

  /** One mixture by id (saved) or name (built-in). Callers check access first. */
  async getFor(organisationId: string, id: string): Promise<MixtureView> {
    const builtin = BUILTIN_VIEWS.find((m) => m.id === id);
    if (builtin) return builtin;
    const row = isUuid(id) ? await this.store.get(organisationId, id) : undefined;
    if (!row) throw mixtureNotFound(id);
    return view(row);
  }

  async get(actor: Actor, organisationId: string, id: string): Promise<MixtureView> {
    await this.access.require(actor, organisationId, 'mixtures.read');
    return this.getFor(organisationId, id);
  }

  /** The nuclides of a saved mixture for an evaluation, or undefined when `id` is not one of them. */
  async savedNuclides(organisationId: string, id: string): Promise<StoredNuclide[] | undefined> {
    if (!isUuid(id)) return undefined;
    return (await this.store.get(organisationId, id))?.nuclides;
  }

  async create(actor: Actor, organisationId: string, body: unknown): Promise<MixtureView> {
    await this.access.require(actor, organisationId, 'mixtures.manage');
    const values = checked(body);
    return this.db.transaction(async (trx) => {
      const row = await this.store.insert(organisationId, actor.userId, values, trx).catch(nameTaken(values.name));
      await this.audit.record({ organisationId, actor, action: 'mixture.created', target: { type: 'mixture', id: row.id }, details: { name: row.name }, ip: actor.ip ?? null }, trx);
      return view(row);
    });
  }

  async update(actor: Actor, organisationId: string, id: string, body: unknown): Promise<MixtureView> {
    await this.access.require(actor, organisationId, 'mixtures.manage');
    if (findBuiltinMixture(id)) throw builtinReadOnly(id);
    const values = checked(body);
    return this.db.transaction(async (trx) => {
      const row = isUuid(id) ? await this.store.update(organisationId, id, values, trx).catch(nameTaken(values.name)) : undefined;
      if (!row) throw mixtureNotFound(id);
      await this.audit.record({ organisationId, actor, action: 'mixture.changed', target: { type: 'mixture', id }, details: { name: row.name }, ip: actor.ip ?? null }, trx);
      return view(row);
    });
  }

  async remove(actor: Actor, organisationId: string, id: string): Promise<void> {
    await this.access.require(actor, organisationId, 'mixtures.manage');
    if (findBuiltinMixture(id)) throw builtinReadOnly(id);
    await this.db.transaction(async (trx) => {
      const row = isUuid(id) ? await this.store.remove(organisationId, id, trx) : undefined;
      if (!row) throw mixtureNotFound(id);
      await this.audit.record({ organisationId, actor, action: 'mixture.deleted', target: { type: 'mixture', id }, details: { name: row.name }, ip: actor.ip ?? null }, trx);
    });
  }
}

function builtinReadOnly(id: string): ProblemError {
  return new ProblemError('mixture-read-only', 409, 'Built-in mixture', `"${id}" is a built-in mixture and cannot be changed or deleted. Save a copy under another name instead.`, { mixture: id });
}

function nameTaken(name: string) {
  return (error: unknown): never => {
    if ((error as { code?: string }).code === '23505') {
      throw new ProblemError('mixture-name-taken', 409, 'Name already used', `This organisation already has a mixture named "${name}". Choose another name or change that one.`, { name });
    }
    throw error;
  };
}

/** Validates a body and returns the values to store (fractions normalised when asked, labels filled in). */
function checked(body: unknown): { name: string; description: string; nuclides: StoredNuclide[] } {
  const input = parse(mixtureBody, body);
  if (findBuiltinMixture(input.name)) {
    throw new ProblemError('invalid-request', 400, 'Invalid request', `name: "${input.name}" is a built-in mixture's name; choose another.`, { errors: [{ field: 'name', message: 'is a built-in name' }] });
  }
  const sum = input.nuclides.reduce((s, nu) => s + nu.massFraction, 0);
  if (!input.normalize && Math.abs(sum - 1) > eos.MASS_FRACTION_TOLERANCE) {
    throw new ProblemError('invalid-request', 400, 'Invalid request', `nuclides: the mass fractions sum to ${sum}, not 1 (within ${eos.MASS_FRACTION_TOLERANCE}). Correct them, or send "normalize": true to rescale them.`, {
      errors: [{ field: 'nuclides', message: `mass fractions sum to ${sum}` }],
      massFractionSum: sum,
    });
  }
  const nuclides = input.nuclides.map((nu) => ({
    nuclide: nu.nuclide || nuclideLabel(nu.a, nu.z),
    a: nu.a,
    z: nu.z,
    massFraction: input.normalize ? nu.massFraction / sum : nu.massFraction,
  }));
  try {
    eos.meanComposition(nuclides);
  } catch (error) {
    throw new ProblemError('invalid-request', 400, 'Invalid request', `nuclides: ${(error as Error).message}.`, { errors: [{ field: 'nuclides', message: (error as Error).message }] });
  }
  return { name: input.name, description: input.description, nuclides };
}
