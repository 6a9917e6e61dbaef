/**
 * `npm run build:table`: builds (or finds in the cache) the free-energy table of the
 * electron–positron gas — the method of Timmes & Swesty 2000, ApJS 126, 501 — via
 * eos-tables/build.ts on all cores, and prints the file, the build time and the accuracy report.
 *
 *   npm run build:table -- [--density-min -12] [--density-max 15] [--temperature-min 3]
 *     [--temperature-max 13] [--points-per-decade 20] [--points-per-decade-density N]
 *     [--points-per-decade-temperature N] [--workers N] [--force] [--data-dir DIR]
 *
 * Bounds are log10 ρYe (g/cm³) and log10 T (K); defaults are the default grid (DEFAULT_TABLE_GRID).
 * The cache folder is `<data dir>/tables/` (data dir: FW_DATA_DIR or .data/).
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { DEFAULT_TABLE_GRID, validateGrid, type TableGrid } from '../eos/free-energy-table.js';
import { ensureFreeEnergyTable, formatAccuracy } from '../eos-tables/build.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const log = (line: string) => console.log(`[build:table] ${line}`);

function number(name: string, value: string | undefined, fallback: number): number {
  if (value === undefined) return fallback;
  const n = Number(value);
  if (!Number.isFinite(n)) {
    console.error(`--${name} must be a number, got "${value}"`);
    process.exit(2);
  }
  return n;
}

async function main() {
  // `--density-min -12`: join a negative number to its flag (parseArgs takes "-12" for a flag otherwise)
  const args: string[] = [];
  const argv = process.argv.slice(2);
  for (let k = 0; k < argv.length; k++) {
    if (/^--[a-z-]+$/.test(argv[k]) && k + 1 < argv.length && /^-\d|^-\.\d/.test(argv[k + 1])) args.push(`${argv[k]}=${argv[++k]}`);
    else args.push(argv[k]);
  }
  const { values } = parseArgs({
    args,
    options: {
      'density-min': { type: 'string' }, 'density-max': { type: 'string' },
      'temperature-min': { type: 'string' }, 'temperature-max': { type: 'string' },
      'points-per-decade': { type: 'string' }, 'points-per-decade-density': { type: 'string' }, 'points-per-decade-temperature': { type: 'string' },
      workers: { type: 'string' }, force: { type: 'boolean' }, 'data-dir': { type: 'string' }, help: { type: 'boolean', short: 'h' },
    },
  });
  if (values.help) {
    console.log('usage: npm run build:table -- [--density-min X] [--density-max X] [--temperature-min X] [--temperature-max X] [--points-per-decade N] [--points-per-decade-density N] [--points-per-decade-temperature N] [--workers N] [--force] [--data-dir DIR]');
    return;
  }
  const d = DEFAULT_TABLE_GRID;
  const ppd = number('points-per-decade', values['points-per-decade'], NaN);
  const grid: TableGrid = {
    logDensityYeMin: number('density-min', values['density-min'], d.logDensityYeMin),
    logDensityYeMax: number('density-max', values['density-max'], d.logDensityYeMax),
    logTemperatureMin: number('temperature-min', values['temperature-min'], d.logTemperatureMin),
    logTemperatureMax: number('temperature-max', values['temperature-max'], d.logTemperatureMax),
    pointsPerDecadeDensity: number('points-per-decade-density', values['points-per-decade-density'], Number.isNaN(ppd) ? d.pointsPerDecadeDensity : ppd),
    pointsPerDecadeTemperature: number('points-per-decade-temperature', values['points-per-decade-temperature'], Number.isNaN(ppd) ? d.pointsPerDecadeTemperature : ppd),
  };
  try {
    validateGrid(grid);
  } catch (error) {
    console.error(`${(error as Error).message} (grid ${JSON.stringify(grid)})`);
    process.exit(2);
  }
  const dataDir = path.resolve(values['data-dir'] ?? process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
  const t0 = Date.now();
  const r = await ensureFreeEnergyTable({
    dataDir, grid, log, force: values.force ?? false,
    workers: values.workers === undefined ? undefined : number('workers', values.workers, 1),
  });
  log(`table file: ${r.path}`);
  log(r.built
    ? `built in ${r.table.build.seconds.toFixed(1)} s on ${r.table.build.workers} worker thread(s) (wall ${((Date.now() - t0) / 1000).toFixed(1)} s including writing)`
    : `already in the cache (built ${r.table.build.builtAt} in ${r.table.build.seconds.toFixed(1)} s on ${r.table.build.workers} worker thread(s)); --force rebuilds it`);
  for (const line of formatAccuracy(r.table)) log(line);
}

main().catch((error) => {
  console.error(error instanceof Error ? error.message : error);
  process.exit(1);
});
