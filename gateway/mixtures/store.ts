/** SQL of saved mixtures (knex bindings only). */
import type { Knex } from 'knex';

export interface StoredNuclide {
  nuclide: string;
  a: number;
  z: number;
  massFraction: number;
}

export interface MixtureRow {
  id: string;
  organisation_id: string;
  name: string;
  description: string;
  nuclides: StoredNuclide[];
  created_by: string | null;
  created_at: Date;
  updated_at: Date;
}

export interface MixtureValues {
  name: string;
  description: string;
  nuclides: StoredNuclide[];
}

export class MixtureStore {
  constructor(private readonly db: Knex) {}

  list(organisationId: string): Promise<MixtureRow[]> {
    return this.db<MixtureRow>('mixtures').where({ organisation_id: organisationId }).orderBy('name');
  }

  get(organisationId: string, id: string): Promise<MixtureRow | undefined> {
    return this.db<MixtureRow>('mixtures').where({ organisation_id: organisationId, id }).first();
  }

  async insert(organisationId: string, createdBy: string | null, values: MixtureValues, db: Knex | Knex.Transaction = this.db): Promise<MixtureRow> {
    const [row] = await db<MixtureRow>('mixtures')
      .insert({ organisation_id: organisationId, created_by: createdBy, ...values, nuclides: JSON.stringify(values.nuclides) as never })
      .returning('*');
    return row as MixtureRow;
  }

  async update(organisationId: string, id: string, values: MixtureValues, db: Knex | Knex.Transaction = this.db): Promise<MixtureRow | undefined> {
    const [row] = await db<MixtureRow>('mixtures')
      .where({ organisation_id: organisationId, id })
      .update({ ...values, nuclides: JSON.stringify(values.nuclides) as never, updated_at: db.fn.now() as never })
      .returning('*');
    return row as MixtureRow | undefined;
  }

  async remove(organisationId: string, id: string, db: Knex | Knex.Transaction = this.db): Promise<MixtureRow | undefined> {
    const [row] = await db<MixtureRow>('mixtures').where({ organisation_id: organisationId, id }).delete().returning('*');
    return row as MixtureRow | undefined;
  }
}
