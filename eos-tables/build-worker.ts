/**
 * Worker thread of the free-energy table builder (eos-tables/build.ts; the table method of Timmes &
 * Swesty 2000, ApJS 126, 501). Computes grid rows of node values into a buffer shared with the
 * main thread (`computeTableRows`), then, once all rows are in, assembles the same table from that
 * buffer and measures interpolation errors against the exact method on slices of the accuracy
 * points (`measureErrors`). Messages: see the `Request`/`Reply` types in build.ts.
 */

import { parentPort, workerData } from 'node:worker_threads';
import {
  accuracySamplePoints, assembleTable, computeTableRows, gridSize, measureErrors, TABLE_COLUMN_COUNT,
  type AccuracyPoints, type FreeEnergyTable, type TableGrid,
} from '../eos/free-energy-table.js';
import type { WorkerReply, WorkerRequest } from './build.js';

const { grid, nodeValues } = workerData as { grid: TableGrid; nodeValues: SharedArrayBuffer };
const values = new Float64Array(nodeValues);
const { nT } = gridSize(grid);
let table: FreeEnergyTable | null = null;
let points: { key: string; pts: AccuracyPoints } | null = null;

const port = parentPort!;
port.on('message', (req: WorkerRequest) => {
  let reply: WorkerReply;
  try {
    if (req.type === 'rows') {
      const out = values.subarray(req.iStart * nT * TABLE_COLUMN_COUNT, req.iEnd * nT * TABLE_COLUMN_COUNT);
      const failed = computeTableRows(grid, req.iStart, req.iEnd, out);
      reply = { type: 'rows', iStart: req.iStart, iEnd: req.iEnd, failed };
    } else {
      table ??= assembleTable(grid, values, { modelVersion: '', constantsSet: '', seconds: 0, workers: 0 });
      const key = `${req.randomPoints}/${req.seed}/${req.cellCentres}`;
      if (points?.key !== key) points = { key, pts: accuracySamplePoints(grid, req.randomPoints, req.seed, req.cellCentres) };
      const err = measureErrors(table, points.pts, req.from, req.to);
      reply = { type: 'errors', from: req.from, to: req.to, err };
      port.postMessage(reply, [err.buffer as ArrayBuffer]);
      return;
    }
  } catch (error) {
    reply = { type: 'failed', message: error instanceof Error ? `${error.message}\n${error.stack ?? ''}` : String(error) };
  }
  port.postMessage(reply);
});
