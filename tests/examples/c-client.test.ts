/**
 * The C client (examples/c): compiled with gcc and libcurl, run against a test gateway. Its binary
 * answers must be the JSON form's numbers, its inversions must return the temperatures it started
 * from, and refused requests must surface the gateway's problem+json.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import { postJson } from '../support/api.js';
import { EXAMPLES, build, exampleGateway, relativeDifference, rows, run, scratch, type ExampleGateway, type Run } from './support.js';

let gw: ExampleGateway;
let work: ReturnType<typeof scratch>;
let result: Run;

before(async () => {
  work = scratch('c-client');
  await build('make', ['-s', '-C', path.join(EXAMPLES, 'c'), `BUILD=${work.dir}`]);
  gw = await exampleGateway();
  result = await run(path.join(work.dir, 'eos_batch'), [], { env: gw.env });
});
after(async () => {
  await gw?.close();
  work?.remove();
});

describe('C client example (eos_batch) against the gateway', () => {
  test('evaluates a batch through the binary form: the same numbers as the JSON form', async () => {
    assert.equal(result.code, 0, result.stderr);
    const evaluated = rows(result.stdout, 'evaluate');
    assert.equal(evaluated.length, 6);
    const density = evaluated.map((w) => Number(w[2]));
    const temperature = evaluated.map((w) => Number(w[3]));
    const json = await postJson(`${gw.gateway.url}/v1/eos/evaluate`, gw.key.token, {
      density,
      temperature,
      composition: { mixture: 'c12-o16' },
      fields: ['pressure', 'specificEnergy', 'gamma1'],
    });
    assert.equal(json.status, 200, JSON.stringify(json.body));
    evaluated.forEach((w, i) => {
      assert.equal(Number(w[7]), json.body.status[i], `status of point ${i}`);
      if (json.body.status[i] !== 0) return;
      for (const [column, name] of [[4, 'pressure'], [5, 'specificEnergy'], [6, 'gamma1']] as const) {
        assert.equal(Number(w[column]), json.body.values[name][i], `${name}[${i}]`);
      }
    });
  });

  test('a point outside the domain gets its per-point status, the others are computed', () => {
    const evaluated = rows(result.stdout, 'evaluate');
    assert.deepEqual(evaluated.map((w) => w[8]), ['OK', 'OK', 'OK', 'OK', 'OK', 'TEMPERATURE_OUT_OF_RANGE']);
    assert.equal(evaluated[5]![7], '4');
  });

  test('inverts (density, specific energy) back to the temperature it started from, within 1e-10', () => {
    const inverted = rows(result.stdout, 'invert');
    assert.equal(inverted.length, 5, 'the five computed zones');
    for (const w of inverted) {
      assert.equal(w[8], '0', `status of ${w.join(' ')}`);
      assert.ok(relativeDifference(Number(w[4]), Number(w[5])) <= 1e-10, `T ${w[4]} vs ${w[5]}`);
      assert.ok(Number(w[7]) >= 1, 'iterations reported');
    }
  });

  test('a refused request surfaces the problem+json kind, title and detail', () => {
    const [refused] = rows(result.stdout, 'refused');
    assert.ok(refused, result.stdout);
    const line = refused.join(' ');
    assert.match(line, /^refused rc=-4 http=400 HTTP 400 invalid-request: /);
    assert.match(line, /\/query\/fields\/0: must be equal to one of the allowed values: pressure/, 'the detail names the bad field and the allowed ones');
  });

  test('a wrong key: exit status 2 and the 401 problem on stderr', async () => {
    const bad = await run(path.join(work.dir, 'eos_batch'), [], { env: { ...gw.env, FERMIWELL_KEY: 'fwk_aaaaaaaa_bbbbbbbbbbbbbbbbbbbbbbbbbbbbbbbb' } });
    assert.equal(bad.code, 2);
    assert.match(bad.stderr, /evaluate failed: HTTP 401 invalid-api-key: .+ — .+/);
  });

  test('no gateway at the URL: a transport error in words, not a crash', async () => {
    const none = await run(path.join(work.dir, 'eos_batch'), [], { env: { ...gw.env, FERMIWELL_URL: 'http://127.0.0.1:9' } });
    assert.equal(none.code, 2);
    assert.match(none.stderr, /no answer from http:\/\/127\.0\.0\.1:9\/v1\/eos\/evaluate/);
  });
});
