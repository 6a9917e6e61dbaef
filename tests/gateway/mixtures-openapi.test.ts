/**
 * schema/openapi-mixtures.yaml is a valid OpenAPI 3.1 document (checked with
 * @seriousme/openapi-schema-validator against the published 3.1 schema) and describes exactly the
 * routes the mixtures router registers.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import { Validator } from '@seriousme/openapi-schema-validator';
import type { Router } from 'express';
import { repoRoot } from '../../gateway/config.js';
import { mixtureRoutes } from '../../gateway/mixtures/routes.js';
import type { MixtureService } from '../../gateway/mixtures/service.js';
import type { Services } from '../../gateway/services.js';

const document = YAML.parse(fs.readFileSync(path.join(repoRoot, 'schema', 'openapi-mixtures.yaml'), 'utf8'));

test('the mixtures OpenAPI document is valid OpenAPI 3.1', async () => {
  const result = await new Validator().validate(document);
  assert.equal(result.valid, true, JSON.stringify(result.errors, null, 1));
});

test('every mixtures route is documented, and every documented path is a route', () => {
  // building the router touches no service: stand-ins for what it captures are enough
  const noop = (_req: unknown, _res: unknown, next: () => void) => next();
  const services = { rateLimit: { middleware: noop }, keys: {}, auth: {}, access: {}, db: {} } as unknown as Services;
  const routes = new Set<string>();
  for (const layer of (mixtureRoutes(services, {} as MixtureService) as Router).stack as Array<{ route?: { path: string; methods: Record<string, boolean> } }>) {
    if (!layer.route) continue;
    for (const method of Object.keys(layer.route.methods)) routes.add(`${method.toUpperCase()} ${layer.route.path.replace(/:(\w+)/g, '{$1}')}`);
  }
  const documented = new Set<string>();
  for (const [p, item] of Object.entries(document.paths as Record<string, Record<string, unknown>>)) {
    for (const method of ['get', 'post', 'put', 'patch', 'delete']) if (item[method]) documented.add(`${method.toUpperCase()} ${p}`);
  }
  assert.deepEqual([...routes].sort(), [...documented].sort());
});
