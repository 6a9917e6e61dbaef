/**
 * Credentials for the route fuzzer (tests/reliability/fuzz-routes.ts), made against the real test
 * database: an organisation on the Facility plan (room for the fuzz's request rate), its owner
 * signed in, an API key with every scope, a decoy key the fuzz may rotate or revoke, a platform
 * operator signed in, and one saved mixture. `renew` signs the owner in again when the fuzz ended
 * the session (sign-out, reuse of a rotated refresh token).
 */
import type { Knex } from 'knex';
import { KeyService } from '../../gateway/keys/service.js';
import { SCOPES } from '../../gateway/keys/types.js';
import { Client, makeUser, tag } from '../support/accounts.js';
import type { FuzzCredentials } from './fuzz-routes.js';

export async function prepareFuzzCredentials(baseUrl: string, db: Knex): Promise<FuzzCredentials & { close(): Promise<void> }> {
  const owner = await makeUser(db, 'fuzz');
  const operator = await makeUser(db, 'fuzzop', { platformRole: 'operator' });
  const [org] = await db('organisations').insert({ name: `Fuzz group ${tag()}`, slug: `fuzz-${tag()}`, plan_id: 'facility' }).returning('id');
  await db('memberships').insert({ user_id: owner.id, organisation_id: org.id, role: 'owner' });
  const keys = new KeyService(db);
  const key = await keys.create({ organisationId: org.id, name: 'fuzz key', scopes: [...SCOPES], createdBy: owner.id, expiresAt: null });
  const decoy = await keys.create({ organisationId: org.id, name: 'fuzz decoy', scopes: ['eos:evaluate'], createdBy: owner.id, expiresAt: null });

  const ownerClient = new Client(baseUrl);
  const operatorClient = new Client(baseUrl);
  const signIn = async (client: Client, email: string, password: string) => {
    const answer = await client.signIn(email, password);
    if (answer.status !== 200) throw new Error(`fuzz setup: sign-in failed (${answer.status}): ${JSON.stringify(answer.body)}`);
  };
  await signIn(ownerClient, owner.email, owner.password);
  await signIn(operatorClient, operator.email, operator.password);
  ownerClient.organisationId = org.id;
  const mixture = await ownerClient.post('/v1/mixtures', { name: 'Fuzz C/O', nuclides: [{ a: 12, z: 6, massFraction: 0.5 }, { a: 16, z: 8, massFraction: 0.5 }] });
  if (mixture.status !== 201) throw new Error(`fuzz setup: mixture not created (${mixture.status}): ${JSON.stringify(mixture.body)}`);

  const credentials: FuzzCredentials & { close(): Promise<void> } = {
    apiKey: key.token,
    session: { accessToken: ownerClient.accessToken!, refreshCookie: ownerClient.refreshCookie!, userId: owner.id },
    operator: { accessToken: operatorClient.accessToken!, userId: operator.id },
    organisationId: org.id,
    decoyKeyId: decoy.id,
    mixtureId: mixture.body.id,
    async renew(which) {
      const [client, user] = which === 'session' ? [ownerClient, owner] : [operatorClient, operator];
      const me = await client.get('/v1/me');
      if (me.status === 200) return;
      await signIn(client, user.email, user.password);
      if (which === 'session') credentials.session = { accessToken: client.accessToken!, refreshCookie: client.refreshCookie!, userId: owner.id };
      else credentials.operator = { accessToken: client.accessToken!, userId: operator.id };
    },
    close: () => keys.close(),
  };
  return credentials;
}
