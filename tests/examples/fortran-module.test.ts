/**
 * The Fortran module (examples/fortran, iso_c_binding over the C client): compiled with gfortran,
 * run against a test gateway as a hydro step would use it.
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
  work = scratch('fortran');
  await build('make', ['-s', '-C', path.join(EXAMPLES, 'fortran'), `BUILD=${work.dir}`]);
  gw = await exampleGateway();
  result = await run(path.join(work.dir, 'hydro_step'), [], { env: gw.env });
});
after(async () => {
  await gw?.close();
  work?.remove();
});

describe('Fortran module example (hydro_step) against the gateway', () => {
  test('evaluates every zone in one call: the JSON form\'s numbers', async () => {
    assert.equal(result.code, 0, result.stdout + result.stderr);
    const zones = rows(result.stdout, 'evaluate');
    assert.equal(zones.length, 8);
    const json = await postJson(`${gw.gateway.url}/v1/eos/evaluate`, gw.key.token, {
      density: zones.map((w) => Number(w[2])),
      temperature: zones.map((w) => Number(w[3])),
      composition: { mixture: 'c12-o16' },
      fields: ['pressure', 'specificEnergy', 'soundSpeed'],
    });
    assert.equal(json.status, 200, JSON.stringify(json.body));
    zones.forEach((w, i) => {
      assert.equal(w[7], '0', `zone ${i + 1} computed`);
      // Fortran prints 17 significant digits (es25.16): enough to round-trip a double
      assert.equal(Number(w[4]), json.body.values.pressure[i], `pressure[${i}]`);
      assert.equal(Number(w[5]), json.body.values.specificEnergy[i], `specificEnergy[${i}]`);
      assert.equal(Number(w[6]), json.body.values.soundSpeed[i], `soundSpeed[${i}]`);
    });
  });

  test('round trip: temperature from (density, energy) is the temperature given, within 1e-10', () => {
    const zones = rows(result.stdout, 'roundtrip');
    assert.equal(zones.length, 8);
    for (const w of zones) {
      assert.equal(w[6], '0', w.join(' '));
      assert.ok(relativeDifference(Number(w[2]), Number(w[3])) <= 1e-10, `T ${w[2]} vs ${w[3]}`);
    }
  });

  test('after +10 % energy every zone is hotter and its pressure higher (∂T/∂e|ρ = 1/c_v > 0, ∂P/∂T|ρ > 0)', () => {
    const before = rows(result.stdout, 'roundtrip');
    const heated = rows(result.stdout, 'heated');
    assert.equal(heated.length, 8);
    heated.forEach((w, i) => {
      assert.equal(w[5], '0', w.join(' '));
      assert.ok(Number(w[3]) > Number(before[i]![2]), `zone ${i + 1}: T ${w[3]} > ${before[i]![2]}`);
      assert.ok(Number(w[4]) > Number(before[i]![4]), `zone ${i + 1}: P ${w[4]} > ${before[i]![4]}`);
    });
  });

  test('a refused request (unknown mixture) surfaces the problem detail in Fortran', () => {
    const [refused] = rows(result.stdout, 'refused');
    assert.ok(refused, result.stdout);
    const line = refused.join(' ');
    assert.match(line, /^refused -4 422 HTTP 422 invalid-composition: /);
    assert.match(line, /no-such-mixture/);
  });
});
