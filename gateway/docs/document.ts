/**
 * The API contract, read once: schema/openapi.yaml (the EOS API, operations, shared problem
 * schema) merged with every feature's own `schema/openapi-<feature>.yaml` (a complete OpenAPI 3.1
 * document of that feature, so it validates on its own). The merge takes each fragment's paths,
 * tags and components; a name both define must be identical or the main document's `Problem`
 * schema (fragments keep their own copy so they validate alone). Served as JSON at /openapi.json,
 * shown at /docs, and used by express-openapi-validator. Each caller gets a deep copy, because the
 * validator annotates the document it is given.
 */
import fs from 'node:fs';
import path from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import YAML from 'yaml';
import { repoRoot } from '../config.js';

export const SCHEMA_DIR = path.join(repoRoot, 'schema');
export const OPENAPI_FILE = path.join(SCHEMA_DIR, 'openapi.yaml');

type Doc = Record<string, any>;

let cached: Doc | undefined;

export function readYaml(file: string): Doc {
  return YAML.parse(fs.readFileSync(file, 'utf8')) as Doc;
}

/** The feature fragments merged into the main document, in name order. */
export function fragmentFiles(dir = SCHEMA_DIR): string[] {
  return fs
    .readdirSync(dir)
    .filter((f) => /^openapi-.+\.ya?ml$/.test(f))
    .sort()
    .map((f) => path.join(dir, f));
}

export function mergeDocuments(main: Doc, fragments: Array<{ name: string; doc: Doc }>): Doc {
  const out = structuredClone(main);
  out['paths'] ??= {};
  out['components'] ??= {};
  out['tags'] ??= [];
  for (const { name, doc } of fragments) {
    for (const [p, item] of Object.entries(doc['paths'] ?? {})) {
      if (out['paths'][p]) throw new Error(`OpenAPI: ${name} defines path ${p}, already in the document`);
      out['paths'][p] = item;
    }
    for (const tag of doc['tags'] ?? []) {
      if (!out['tags'].some((t: Doc) => t['name'] === tag['name'])) out['tags'].push(tag);
    }
    for (const [section, entries] of Object.entries<Doc>(doc['components'] ?? {})) {
      out['components'][section] ??= {};
      for (const [key, value] of Object.entries(entries)) {
        const existing = out['components'][section][key];
        if (existing === undefined) out['components'][section][key] = value;
        else if (!(section === 'schemas' && key === 'Problem') && !isDeepStrictEqual(existing, value)) {
          throw new Error(`OpenAPI: ${name} defines components.${section}.${key} differently from the document`);
        }
      }
    }
  }
  return out;
}

export function openApiDocument(): Doc {
  cached ??= mergeDocuments(
    readYaml(OPENAPI_FILE),
    fragmentFiles().map((file) => ({ name: path.basename(file), doc: readYaml(file) })),
  );
  return structuredClone(cached);
}
