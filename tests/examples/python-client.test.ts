/**
 * The Python example (examples/python) with Debian's python3: once with python3-numpy, once with
 * the standard library alone (`-S` leaves out dist-packages, where numpy lives).
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import { DEBIAN_PYTHON, EXAMPLES, exampleGateway, rows, run, type ExampleGateway, type Run } from './support.js';

let gw: ExampleGateway;
let withNumpy: Run;
let stdlibOnly: Run;
const script = path.join(EXAMPLES, 'python', 'isotherm.py');

before(async () => {
  gw = await exampleGateway();
  withNumpy = await run(DEBIAN_PYTHON, [script], { env: gw.env });
  stdlibOnly = await run(DEBIAN_PYTHON, ['-S', script], { env: gw.env });
});
after(async () => {
  await gw?.close();
});

const points = (r: Run) => rows(r.stdout, 'point').map((w) => ({ rho: Number(w[1]), p: Number(w[2]), gamma1: Number(w[3]), eta: Number(w[4]), xF: Number(w[5]), status: w[6] }));

describe('Python example (isotherm.py) against the gateway', () => {
  test('runs with NumPy and with the standard library alone, to the same numbers', () => {
    assert.equal(withNumpy.code, 0, withNumpy.stderr);
    assert.equal(stdlibOnly.code, 0, stdlibOnly.stderr);
    assert.match(withNumpy.stdout, /numpy: True/);
    assert.match(stdlibOnly.stdout, /numpy: False/);
    const a = points(withNumpy);
    const b = points(stdlibOnly);
    assert.equal(a.length, 97);
    assert.equal(b.length, 97);
    a.forEach((p, i) => {
      assert.equal(p.status, '0');
      assert.equal(p.p, b[i]!.p);
      assert.equal(p.gamma1, b[i]!.gamma1);
      assert.ok(Math.abs(p.xF - b[i]!.xF) <= 1e-6 * p.xF, `x_F[${i}] ${p.xF} vs ${b[i]!.xF}`);
    });
  });

  test('Γ1 → 5/3 for the non-degenerate ideal gas and → 4/3 for the ultra-relativistic degenerate electrons (common practice)', () => {
    const a = points(withNumpy);
    const dilute = a[0]!; // 1e-2 g/cm³ at 1e6 K: η ≈ −7, k_B T/m_e c² ≈ 1.7e-4
    const dense = a.at(-1)!; // 1e10 g/cm³: x_F ≈ 17
    assert.ok(dilute.eta < -5, `non-degenerate: η = ${dilute.eta}`);
    // the leading corrections, O(k_B T/m_e c²) and O(e^η), are a few 1e-4 here
    assert.ok(Math.abs(dilute.gamma1 - 5 / 3) <= 1e-3, `Γ1 = ${dilute.gamma1}`);
    assert.ok(dense.xF > 10, `relativistic: x_F = ${dense.xF}`);
    assert.ok(dense.gamma1 > 4 / 3 && dense.gamma1 - 4 / 3 <= 0.01, `Γ1 = ${dense.gamma1}`);
  });

  test('x_F = 1 near ρ ≈ 0.97e6 μe g/cm³ = 1.95e6 g/cm³ for μe = 2 (Chandrasekhar 1939; common practice)', () => {
    const a = points(withNumpy);
    const i = a.findIndex((p) => p.xF >= 1);
    // the grid has 8 points per decade: the crossing lies between a[i−1] and a[i]
    assert.ok(a[i - 1]!.rho < 1.95e6 && a[i]!.rho >= 1.95e6 * 0.99, `crossing between ${a[i - 1]!.rho} and ${a[i]!.rho}`);
  });

  test('a refused request raises FermiwellError with the problem kind and detail', async () => {
    const code = [
      'import sys; sys.path.insert(0, sys.argv[1])',
      'from fermiwell_client import Client, FermiwellError',
      'try:',
      '    Client(key="fwk_aaaaaaaa_bbbbbbbbbbbbbbbbbbbbbbbbbbbbbbbb").evaluate([1e6], [1e8], ["pressure"], mixture="c12-o16")',
      'except FermiwellError as e:',
      '    print(e.status, e.kind, "|", e.detail)',
    ].join('\n');
    const r = await run(DEBIAN_PYTHON, ['-c', code, path.join(EXAMPLES, 'python')], { env: gw.env });
    assert.equal(r.code, 0, r.stderr);
    assert.match(r.stdout, /^401 invalid-api-key \| .+/);
  });
});
