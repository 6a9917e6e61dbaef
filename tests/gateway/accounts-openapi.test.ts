/**
 * schema/openapi-accounts.yaml is a valid OpenAPI 3.1 document and describes exactly the routes
 * the accounts routers register (no route undocumented, no documented route missing).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import { Validator } from '@seriousme/openapi-schema-validator';
import type { Router } from 'express';
import { repoRoot } from '../../gateway/config.js';
import { authRoutes } from '../../gateway/auth/routes.js';
import { organisationRoutes } from '../../gateway/organisations/routes.js';
import { keyAdminRoutes } from '../../gateway/keys/routes.js';
import type { Services } from '../../gateway/services.js';

const document = YAML.parse(fs.readFileSync(path.join(repoRoot, 'schema', 'openapi-accounts.yaml'), 'utf8'));

test('the accounts OpenAPI document is valid OpenAPI 3.1', async () => {
  const result = await new Validator().validate(document);
  assert.equal(result.valid, true, JSON.stringify(result.errors, null, 1));
});

test('every accounts route is documented, and every documented path is a route', () => {
  // building the routers touches no service: stand-ins for what they capture are enough
  const noop = (_req: unknown, _res: unknown, next: () => void) => next();
  const services = { authLimits: new Proxy({}, { get: () => noop }), config: {} } as unknown as Services;
  const routes = new Set<string>();
  for (const router of [authRoutes(services), organisationRoutes(services), keyAdminRoutes(services)] as Router[]) {
    for (const layer of router.stack as Array<{ route?: { path: string; methods: Record<string, boolean> } }>) {
      if (!layer.route) continue;
      for (const method of Object.keys(layer.route.methods)) routes.add(`${method.toUpperCase()} ${layer.route.path.replace(/:(\w+)/g, '{$1}')}`);
    }
  }
  const documented = new Set<string>();
  for (const [p, item] of Object.entries(document.paths as Record<string, Record<string, unknown>>)) {
    for (const method of ['get', 'post', 'put', 'patch', 'delete']) if (item[method]) documented.add(`${method.toUpperCase()} ${p}`);
  }
  assert.deepEqual([...routes].sort(), [...documented].sort());
});
