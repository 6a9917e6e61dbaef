/**
 * Renders the Probe's snippet templates (dashboard/src/app/probe/snippet-templates.ts, the one
 * template source) for the reference request below into this folder, one file per language.
 *   node --import tsx examples/snippets/generate.ts           writes the files
 *   node --import tsx examples/snippets/generate.ts --check   exits 1 when a file is out of date
 * tests/examples/snippets.test.ts runs the check, and runs or compiles each snippet against a test
 * gateway.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { SNIPPET_LANGUAGES, renderSnippet, type SnippetRequest } from '../../dashboard/src/app/probe/snippet-templates.js';

/** Two C/O white-dwarf states at the local gateway of `npm start`, as the Probe would send them. */
export const REFERENCE_REQUEST: SnippetRequest = {
  url: 'http://127.0.0.1:8080/v1/eos/evaluate',
  body: {
    density: [1.0e6, 1.0e7],
    temperature: 1.0e8,
    composition: { mixture: 'c12-o16' },
    fields: ['pressure', 'specificEnergy', 'gamma1'],
  },
};

export const SNIPPETS_DIR = path.dirname(fileURLToPath(import.meta.url));

/** The file name and content of every snippet for a request. */
export function renderAll(request: SnippetRequest = REFERENCE_REQUEST): { file: string; text: string }[] {
  return SNIPPET_LANGUAGES.map(({ id, file }) => ({ file, text: renderSnippet(id, request) }));
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const check = process.argv.includes('--check');
  let stale = 0;
  for (const { file, text } of renderAll()) {
    const target = path.join(SNIPPETS_DIR, file);
    const current = fs.existsSync(target) ? fs.readFileSync(target, 'utf8') : null;
    if (current === text) continue;
    if (check) {
      console.error(`${path.relative(process.cwd(), target)} is out of date: run node --import tsx examples/snippets/generate.ts`);
      stale++;
    } else {
      fs.writeFileSync(target, text);
      console.log(`wrote ${path.relative(process.cwd(), target)}`);
    }
  }
  process.exit(stale ? 1 : 0);
}
