/**
 * The Probe's snippets (dashboard/src/app/probe/snippet-templates.ts — the one template source)
 * against a test gateway: the files in examples/snippets are the templates' current output; the
 * Python snippet runs with Debian's python3, the C snippet compiles with gcc (-Wall -Werror) and
 * runs, the Fortran snippet compiles with gfortran against the examples' module and runs, and the
 * curl and TypeScript snippets run — each printing the numbers the JSON API gives.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import fs from 'node:fs';
import path from 'node:path';
import { postJson } from '../support/api.js';
import { renderSnippet, type SnippetRequest } from '../../dashboard/src/app/probe/snippet-templates.js';
import { REFERENCE_REQUEST, SNIPPETS_DIR, renderAll } from '../../examples/snippets/generate.js';
import { DEBIAN_PYTHON, EXAMPLES, ROOT, build, exampleGateway, run, scratch, type ExampleGateway } from './support.js';

let gw: ExampleGateway;
let work: ReturnType<typeof scratch>;
let request: SnippetRequest;
let expected: { values: Record<string, number[]>; status: number[] };

before(async () => {
  work = scratch('snippets');
  gw = await exampleGateway();
  request = { ...REFERENCE_REQUEST, url: `${gw.gateway.url}/v1/eos/evaluate` };
  const json = await postJson(request.url, gw.key.token, request.body);
  assert.equal(json.status, 200, JSON.stringify(json.body));
  expected = json.body;
});
after(async () => {
  await gw?.close();
  work?.remove();
});

/** Writes the snippet of a language for the test gateway into the scratch folder. */
function write(language: Parameters<typeof renderSnippet>[0], file: string): string {
  const target = path.join(work.dir, file);
  fs.writeFileSync(target, renderSnippet(language, request));
  return target;
}

/** The values of a JSON answer printed by a snippet equal the JSON API's. */
function sameAnswer(printed: string) {
  const answer = JSON.parse(printed) as { values: Record<string, number[]>; status: number[] };
  assert.deepEqual(answer.values, expected.values);
  assert.deepEqual(answer.status, expected.status);
}

describe('Probe snippets, from the one template source, against the gateway', () => {
  test('examples/snippets holds the templates\' current output for the reference request', () => {
    for (const { file, text } of renderAll()) {
      const committed = fs.readFileSync(path.join(SNIPPETS_DIR, file), 'utf8');
      assert.equal(committed, text, `${file} is stale: run node --import tsx examples/snippets/generate.ts`);
    }
  });

  test('Python snippet runs with Debian\'s python3 and prints the API\'s values', async () => {
    const file = write('python', 'request.py');
    const r = await run(DEBIAN_PYTHON, [file], { env: gw.env });
    assert.equal(r.code, 0, r.stderr);
    const printed = Object.fromEntries(
      r.stdout.trim().split('\n').filter((l) => !l.startsWith('warning')).map((l) => {
        const space = l.indexOf(' ');
        return [l.slice(0, space), JSON.parse(l.slice(space + 1))];
      }),
    );
    for (const name of ['pressure', 'specificEnergy', 'gamma1']) assert.deepEqual(printed[name], expected.values[name], name);
    assert.deepEqual(printed['status'], expected.status);
  });

  test('Python snippet with a wrong key exits with the problem detail', async () => {
    const file = write('python', 'request-bad-key.py');
    const r = await run(DEBIAN_PYTHON, [file], { env: { ...gw.env, FERMIWELL_KEY: 'fwk_aaaaaaaa_bbbbbbbbbbbbbbbbbbbbbbbbbbbbbbbb' } });
    assert.equal(r.code, 1);
    assert.match(r.stderr, /^401: .+/m);
  });

  test('C snippet compiles with gcc -Wall -Wextra -Werror and prints the API\'s answer', async () => {
    const source = write('c', 'request.c');
    const binary = path.join(work.dir, 'request-c');
    await build('gcc', ['-std=c99', '-Wall', '-Wextra', '-Werror', source, '-o', binary, '-lcurl']);
    const r = await run(binary, [], { env: gw.env });
    assert.equal(r.code, 0, r.stderr);
    sameAnswer(r.stdout);
  });

  test('Fortran snippet compiles with gfortran against examples/fortran and examples/c, and prints the API\'s answer', async () => {
    const source = write('fortran', 'request.f90');
    const binary = path.join(work.dir, 'request-f');
    await build('gfortran', [
      '-ffree-line-length-none', `-J${work.dir}`,
      path.join(EXAMPLES, 'fortran', 'fermiwell.f90'), source, path.join(EXAMPLES, 'c', 'fermiwell.c'),
      '-o', binary, '-lcurl',
    ]);
    const r = await run(binary, [], { env: gw.env });
    assert.equal(r.code, 0, r.stdout + r.stderr);
    sameAnswer(r.stdout.trim());
  });

  test('curl snippet runs with the shell and prints the API\'s answer', async () => {
    const file = write('curl', 'request.sh');
    const r = await run('/bin/sh', [file], { env: gw.env });
    assert.equal(r.code, 0, r.stderr);
    sameAnswer(r.stdout);
  });

  test('TypeScript snippet runs as an ES module and logs the API\'s values', async () => {
    const file = write('typescript', 'request.mts');
    const r = await run(process.execPath, ['--import', 'tsx', file], { env: gw.env, cwd: ROOT });
    assert.equal(r.code, 0, r.stderr);
    for (const value of expected.values['pressure']!) assert.ok(r.stdout.includes(String(value)) || r.stdout.includes(value.toExponential()), `pressure ${value} in ${r.stdout}`);
  });
});
