/**
 * HDF5 file of the free-energy table (eos-tables/table-file.ts; method of Timmes & Swesty 2000,
 * ApJS 126, 501): a small table written with h5wasm and read back is identical bit for bit, gives
 * the same `evaluate` results as the in-memory table, and Debian's `h5dump` (hdf5-tools, installed
 * by scripts/test.sh) lists our datasets and attributes.
 * Run: node --import tsx --test tests/eos/table-file.test.ts
 */
import { test, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { buildFreeEnergyTable, TABLE_COLUMNS, type TableGrid } from '../../eos/free-energy-table.js';
import { evaluate } from '../../eos/state.js';
import { readTable, readTableWithInfo, writeTable } from '../../eos-tables/table-file.js';

const GRID: TableGrid = {
  logDensityYeMin: -4, logDensityYeMax: -2, logTemperatureMin: 5, logTemperatureMax: 6.5,
  pointsPerDecadeDensity: 10, pointsPerDecadeTemperature: 12,
};
const table = buildFreeEnergyTable(GRID, { modelVersion: 'table-file test', constantsSet: 'CODATA 2018' }, { randomPoints: 200, seed: 11 });
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'fw-table-file-'));
const file = path.join(dir, 'small.h5');
after(() => fs.rmSync(dir, { recursive: true, force: true }));

test('write then read: every column identical bit for bit, grid, versions, build facts and accuracy report preserved', async () => {
  await writeTable(file, table, { randomPoints: 200, seed: 11, note: 'test' });
  const { table: back, info } = await readTableWithInfo(file);
  assert.equal(back.nD, table.nD);
  assert.equal(back.nT, table.nT);
  assert.deepEqual(back.grid, table.grid);
  for (const name of TABLE_COLUMNS) {
    const a = table.columns[name], b = back.columns[name];
    assert.ok(b instanceof Float64Array && b.length === a.length, name);
    assert.ok(Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength)), `column ${name} differs`);
  }
  assert.equal(back.modelVersion, 'table-file test');
  assert.equal(back.constantsSet, 'CODATA 2018');
  assert.equal(back.format, table.format);
  assert.equal(back.formatVersion, table.formatVersion);
  assert.deepEqual(back.build, table.build);
  assert.deepEqual(back.accuracy, table.accuracy);
  assert.deepEqual(info.buildParameters, { randomPoints: 200, seed: 11, note: 'test' });
  assert.equal(info.constants['set'], 'CODATA 2018');
  assert.ok(back.packed instanceof Float64Array && back.packed.length === table.packed!.length, 'readTable prepares the kernel data');
  assert.ok(Buffer.from(back.packed!.buffer).equals(Buffer.from(table.packed!.buffer)), 'packed kernel data identical');
});

test('evaluate with the read table equals evaluate with the in-memory table (every output column, in and out of the grid)', async () => {
  if (!fs.existsSync(file)) await writeTable(file, table);
  const back = await readTable(file);
  const inp = {
    density: [2e-4, 1e-3, 3.3e-3, 5e-3, 1e2], temperature: [1.2e5, 4e5, 2.5e6, 9e5, 3e5], abar: [1, 4, 12, 56, 4], zbar: [1, 2, 6, 26, 2],
  };
  const a = evaluate(inp, { method: 'table', table, maxwellResiduals: true });
  const b = evaluate(inp, { method: 'table', table: back, maxwellResiduals: true });
  assert.deepEqual(b, a);
  assert.equal(a.status[4], 8, 'the last point lies outside the grid');
});

test('h5dump -H (Debian hdf5-tools) reads the file and lists our datasets and attributes', async () => {
  if (!fs.existsSync(file)) await writeTable(file, table);
  const out = execFileSync('h5dump', ['-H', file], { encoding: 'utf8' });
  for (const name of TABLE_COLUMNS) assert.match(out, new RegExp(`DATASET "${name}" \\{[^}]*H5T_IEEE_F64LE\\s*DATASPACE\\s*SIMPLE \\{ \\( ${table.nD}, ${table.nT} \\)`), `dataset ${name}`);
  assert.match(out, /GROUP "grid"/);
  assert.match(out, new RegExp(`DATASET "log_density_ye" \\{[^}]*\\( ${table.nD} \\)`));
  assert.match(out, new RegExp(`DATASET "log_temperature" \\{[^}]*\\( ${table.nT} \\)`));
  for (const a of ['format', 'format_version', 'model_version', 'constants_set', 'constants', 'log_density_ye_min', 'log_density_ye_max', 'log_temperature_min',
    'log_temperature_max', 'points_per_decade_density', 'points_per_decade_temperature', 'refined_temperature_min', 'refined_temperature_max',
    'refined_temperature_points_per_decade', 'built_at', 'build_seconds', 'build_parameters', 'accuracy_report',
    'pressure_max', 'energy_median', 'entropy_p99', 'description']) {
    assert.match(out, new RegExp(`ATTRIBUTE "${a}"`), `attribute ${a}`);
  }
  // values, not only headers: the model version and a grid bound as h5dump prints them
  const mv = execFileSync('h5dump', ['-a', '/model_version', file], { encoding: 'utf8' });
  assert.match(mv, /"table-file test"/);
  const lo = execFileSync('h5dump', ['-a', '/log_density_ye_min', file], { encoding: 'utf8' });
  assert.match(lo, /\(0\): -4\b/);
});

test('readTable names the file and the problem when the file is not a table', async () => {
  const bad = path.join(dir, 'not-a-table.h5');
  const h5wasm = (await import('h5wasm/node')).default;
  await h5wasm.ready;
  const f = new h5wasm.File(bad, 'w');
  f.create_attribute('something', 'else');
  f.close();
  await assert.rejects(readTable(bad), (e: Error) => e.message.includes(bad) && /attribute "format" missing/.test(e.message));
});

test('a table with the denser pair-onset T band (format version 3) round-trips: the band attributes, the piecewise node temperatures, evaluate identical', async () => {
  const grid: TableGrid = {
    logDensityYeMin: -1, logDensityYeMax: 0, logTemperatureMin: 9.8, logTemperatureMax: 10.2,
    pointsPerDecadeDensity: 10, pointsPerDecadeTemperature: 10,
  };
  const banded = buildFreeEnergyTable(grid, { modelVersion: 'table-file test', constantsSet: 'CODATA 2018' }, { randomPoints: 50, seed: 3 });
  assert.deepEqual(banded.grid.refinedTemperature, { logTemperatureMin: 9.8, logTemperatureMax: 10, pointsPerDecade: 60 });
  assert.equal(banded.nT, 12 + 2 + 1);
  const bandFile = path.join(dir, 'banded.h5');
  await writeTable(bandFile, banded);
  const back = await readTable(bandFile);
  assert.deepEqual(back.grid, banded.grid);
  const lt = execFileSync('h5dump', ['-d', '/grid/log_temperature', '-m', '%.4f', bandFile], { encoding: 'utf8' });
  const values = [...lt.matchAll(/\(\d+\): ([\d.]+)/g)].map((m) => m[1]);
  assert.deepEqual(values, ['9.8000', '9.8167', '9.8333', '9.8500', '9.8667', '9.8833', '9.9000', '9.9167', '9.9333', '9.9500', '9.9667', '9.9833', '10.0000', '10.1000', '10.2000']);
  assert.match(execFileSync('h5dump', ['-a', '/refined_temperature_points_per_decade', bandFile], { encoding: 'utf8' }), /\(0\): 60\b/);
  const inp = { density: [0.5, 1.5, 1.9], temperature: [6.5e9, 1.05e10, 1.5e10], abar: 2, zbar: 1 };
  assert.deepEqual(evaluate(inp, { method: 'table', table: back }), evaluate(inp, { method: 'table', table: banded }));
});
