/**
 * The one EOS service behind REST (JSON and binary) and GraphQL, so both transports apply the same
 * rules and return the same numbers:
 *
 *   prepare   — what the schemas cannot say: one common batch length, the composition (built-in
 *               mixture names, nuclide lists whose fractions must sum to 1, domain of a batch-wide
 *               Abar/Zbar), the inverse-problem pair, output field names, the plan's largest batch;
 *   execute   — quota admission through the meter (nothing computed or billed past the quota),
 *               the batch in the worker pool, and exactly one usage record per request;
 *   merge     — chunk results joined into one answer (columns, per-point status, messages).
 *
 * Request-wide problems are 4xx problems and nothing is billed; problems of single points are
 * per-point status codes (a batch is billed by its length, like every point was evaluated).
 */
import * as eos from '../../eos/index.js';
import type { AccuracyReport, AccuracyStats, FreeEnergyTable } from '../../eos/free-energy-table.js';
import { readTableAccuracy } from '../../eos-tables/table-file.js';
import { ProblemError } from '../shared/problem.js';
import type { ApiKeyContext, PlanLimits } from '../keys/types.js';
import { planTitle } from '../plans/store.js';
import type { Meter } from '../usage/meter.js';
import { findBuiltinMixture, BUILTIN_MIXTURE_NAMES } from './builtin-mixtures.js';
import {
  COMPONENTS, COMPONENT_FIELDS, DEFAULT_EVALUATE_FIELDS, DEFAULT_INVERT_FIELDS, DEFAULT_REGIME_FIELDS, EVALUATE_FIELDS,
  INVERT_OUTPUT_FIELDS, MAXWELL_FIELDS, REGIME_FIELDS, REGIME_NUMERIC_COLUMNS, parseColumnRef, regimeColumns, type ColumnRef,
} from './fields.js';
import type { EosPool, LazySignal } from './pool.js';
import type {
  AnyColumn, EosTask, EosTaskFailure, EosTaskResult, Encoding, JsonParts, Operation, PointWarning, StatusMessage, TaskOptions, TaskOutputs,
  WireColumn, WireComposition,
} from './tasks.js';

export type { Operation } from './tasks.js';

/** A column as it arrives: a number (broadcast), a JSON array, or a decoded binary column. */
export type InputColumn = number | readonly number[] | Float64Array;

/** The JSON request body of all three endpoints (GraphQL inputs carry the same names). */
export interface EosRequest {
  density?: InputColumn | null;
  temperature?: InputColumn | null;
  pressure?: InputColumn | null;
  specificEnergy?: InputColumn | null;
  specificEntropy?: InputColumn | null;
  composition?: CompositionRequest | null;
  components?: readonly string[] | null;
  method?: 'exact' | 'table' | null;
  fields?: readonly string[] | null;
  breakdown?: boolean | null;
  soundSpeed?: 'newtonian' | 'relativistic' | null;
  maxwellResiduals?: boolean | null;
  tolerance?: number | null;
  maxEvaluations?: number | null;
}

export interface CompositionRequest {
  abar?: InputColumn | null;
  zbar?: InputColumn | null;
  nuclides?: ReadonlyArray<{ a: number; z: number; massFraction: InputColumn }> | null;
  normalize?: boolean | null;
  mixture?: string | null;
}

/** A request made ready for the pool. */
export interface PreparedBatch {
  op: Operation;
  n: number;
  given: Record<string, InputColumn>;
  composition: { kind: 'mean'; abar: InputColumn; zbar: InputColumn } | { kind: 'nuclides'; normalize: boolean; nuclides: Array<{ a: number; z: number; massFraction: InputColumn }> };
  options: TaskOptions;
  outputs: Omit<TaskOutputs, 'encoding'>;
  /** Binary form: the response columns in order (the status column follows them). */
  binaryColumns?: Array<{ name: string; ref: ColumnRef }>;
  inverseProblem?: string;
}

export interface Meta {
  operation: Operation;
  modelVersion: string;
  constantsSet: string;
  method: string;
  inverseProblem: string | null;
  points: number;
  components: string[];
  computeMs: number;
  /** Filled when the table method answers (its measured accuracy); null for the exact method. */
  tableAccuracy: TableAccuracyMeta | null;
  statusMessageCount: number;
  warningCount: number;
  detailsTruncated: boolean;
}

/**
 * The table's accuracy report (measured by its builder: relative errors of the electron–positron
 * gas against the exact method at cell centres and seeded random off-grid points), in `meta`.
 * Non-finite figures are null.
 */
export interface TableAccuracyMeta {
  /** Largest relative error of pressure, specific energy and specific entropy. */
  maxRelativeError: number | null;
  /** Largest of the three medians. */
  medianRelativeError: number | null;
  /** Per quantity (pressure, energy, entropy, derivatives, eta, …): max, median, 99th percentile. */
  quantities: Record<string, { max: number | null; median: number | null; p99: number | null }>;
  /** Largest Maxwell-relation residual in table mode over the same points. */
  maxwellMax: number | null;
  cellCentres: number;
  randomPoints: number;
  seed: number;
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

function tableAccuracyMeta(report: AccuracyReport | null): TableAccuracyMeta | null {
  if (!report) return null;
  const q = report.quantities;
  const main = ['pressure', 'energy', 'entropy'].filter((k) => q[k]);
  const worst = (pick: (s: AccuracyStats) => number) => finiteOrNull(Math.max(...main.map((k) => pick(q[k]!))));
  return {
    maxRelativeError: main.length ? worst((s) => s.max) : null,
    medianRelativeError: main.length ? worst((s) => s.median) : null,
    quantities: Object.fromEntries(Object.entries(q).map(([k, s]) => [k, { max: finiteOrNull(s.max), median: finiteOrNull(s.median), p99: finiteOrNull(s.p99) }])),
    maxwellMax: finiteOrNull(report.maxwellMax),
    cellCentres: report.cellCentres,
    randomPoints: report.randomPoints,
    seed: report.seed,
  };
}

export interface BatchAnswer {
  meta: Meta;
  n: number;
  encoding: Encoding;
  fields: Record<string, AnyColumn>;
  components: Record<string, Record<string, WireColumn>> | null;
  maxwellResiduals: Record<string, WireColumn> | null;
  status: Uint8Array;
  warningFlags: Uint8Array;
  statusMessages: StatusMessage[];
  warnings: PointWarning[];
  binaryColumns?: PreparedBatch['binaryColumns'];
}

/** Set when this request has its usage record (admitted or recorded as rejected). */
export interface MeterMark {
  recorded: boolean;
}

export interface ExecuteContext {
  /** Metering label, e.g. "/v1/eos/evaluate" or "graphql:evaluate". */
  endpoint: string;
  encoding: Encoding;
  signal?: AbortSignal | LazySignal;
  mark: MeterMark;
  /** When the request reached the gateway (performance.now()), for the recorded latency. */
  startedAt: number;
}

export const DETAIL_LIMIT = 1_000;

const GIVEN_NAMES = ['density', 'temperature', 'pressure', 'specificEnergy', 'specificEntropy'] as const;

/** The inverse problems by the pair of state variables they start from (eos/invert.ts names). */
const INVERSE_PROBLEMS: ReadonlyArray<readonly [string, string, string]> = [
  ['density-energy', 'density', 'specificEnergy'],
  ['density-pressure', 'density', 'pressure'],
  ['density-entropy', 'density', 'specificEntropy'],
  ['pressure-temperature', 'pressure', 'temperature'],
  ['pressure-entropy', 'pressure', 'specificEntropy'],
];

function invalid(detail: string, extensions: Record<string, unknown> = {}): ProblemError {
  return new ProblemError('invalid-request', 400, 'Invalid request', detail, extensions);
}

function invalidComposition(detail: string, extensions: Record<string, unknown> = {}): ProblemError {
  return new ProblemError('invalid-composition', 422, 'Invalid composition', detail, extensions);
}

function lengthOf(col: InputColumn): number {
  return typeof col === 'number' ? 1 : col.length;
}

function isScalar(col: InputColumn): boolean {
  return lengthOf(col) === 1;
}

function firstValue(col: InputColumn): number {
  return typeof col === 'number' ? col : col[0]!;
}

/** Rows [start, end) of a column as a fresh Float64Array (length 1 stays length 1: broadcast). */
function sliceColumn(col: InputColumn, start: number, end: number): Float64Array {
  if (typeof col === 'number') return Float64Array.of(col);
  if (col.length === 1) return Float64Array.of(col[0]!);
  if (col instanceof Float64Array) return col.slice(start, end);
  const out = new Float64Array(end - start);
  for (let i = start; i < end; i++) out[i - start] = col[i]!;
  return out;
}

/** Looks up an organisation's saved mixture by id (gateway/mixtures); undefined when there is none. */
export type SavedMixtureLookup = (organisationId: string, id: string) => Promise<ReadonlyArray<{ a: number; z: number; massFraction: number }> | undefined>;

export class EosService {
  private savedMixtures: SavedMixtureLookup | undefined;

  constructor(
    private readonly pool: EosPool,
    private readonly meter: Meter,
    private readonly chunkPoints: number,
  ) {}

  /** Lets `{ "mixture": "<id>" }` name the caller's saved mixtures besides the built-in ones. */
  useSavedMixtures(lookup: SavedMixtureLookup): void {
    this.savedMixtures = lookup;
  }

  /**
   * The nuclides of `mixture` when it names one of the organisation's saved mixtures; undefined for
   * built-in names and absent values (prepare handles those); a 400 problem for unknown names.
   */
  async savedMixture(organisationId: string, mixture: string | null | undefined): Promise<Array<{ a: number; z: number; massFraction: number }> | undefined> {
    if (mixture == null || findBuiltinMixture(mixture)) return undefined;
    const nuclides = this.savedMixtures ? await this.savedMixtures(organisationId, mixture) : undefined;
    if (!nuclides) {
      throw invalidComposition(
        `Unknown mixture "${mixture}": neither a built-in mixture (${BUILTIN_MIXTURE_NAMES.join(', ')}) nor a saved mixture of this organisation (list them with GET /v1/mixtures).`,
        { mixtures: BUILTIN_MIXTURE_NAMES },
      );
    }
    return nuclides.map(({ a, z, massFraction }) => ({ a, z, massFraction }));
  }

  /** The request with a saved mixture's id replaced by its nuclides (see savedMixture). */
  async withSavedMixture<T extends EosRequest>(organisationId: string, req: T): Promise<T> {
    const c = req?.composition;
    if (!c || typeof c !== 'object' || typeof c.mixture !== 'string') return req;
    const nuclides = await this.savedMixture(organisationId, c.mixture);
    return nuclides ? { ...req, composition: { ...c, mixture: null, nuclides } } : req;
  }

  // ── prepare ──────────────────────────────────────────────────────────────────────────────

  /** Validates a JSON (or GraphQL) request against the rules and the plan; throws 4xx problems. */
  prepare(op: Operation, req: EosRequest, limits: PlanLimits): PreparedBatch {
    const given: Record<string, InputColumn> = {};
    for (const name of GIVEN_NAMES) {
      const value = req[name];
      if (value !== undefined && value !== null) given[name] = value;
    }
    let inverseProblem: string | undefined;
    if (op === 'invert') {
      try {
        inverseProblem = eos.inverseProblemOf(given as unknown as eos.InvertInput);
      } catch (error) {
        throw invalid(`${(error as Error).message}.`, { inverseProblems: INVERSE_PROBLEMS.map(([name, a, b]) => ({ name, given: [a, b] })) });
      }
    } else {
      for (const name of ['pressure', 'specificEnergy', 'specificEntropy']) {
        if (name in given) throw invalid(`${name} is an input of /v1/eos/invert only; ${op} takes density and temperature.`);
      }
      for (const name of ['density', 'temperature']) {
        if (!(name in given)) throw invalid(`${name} is required.`);
      }
    }

    const composition = this.resolveComposition(req.composition);

    // one common batch length (arrays of length 1 and numbers broadcast)
    const lengths: Array<[string, number]> = Object.entries(given).map(([k, v]) => [k, lengthOf(v)]);
    if (composition.kind === 'mean') lengths.push(['composition.abar', lengthOf(composition.abar)], ['composition.zbar', lengthOf(composition.zbar)]);
    else composition.nuclides.forEach((nu, j) => lengths.push([`composition.nuclides[${j}].massFraction`, lengthOf(nu.massFraction)]));
    for (const [name, len] of lengths) if (len === 0) throw invalid(`${name} is an empty array; give at least one value.`);
    const n = Math.max(...lengths.map(([, len]) => len));
    const mismatched = lengths.filter(([, len]) => len !== 1 && len !== n);
    if (mismatched.length > 0) {
      throw invalid(
        `Input arrays must have one common length (or be single numbers, which apply to every point): ${lengths.map(([k, len]) => `${k} has ${len}`).join(', ')}.`,
        { lengths: Object.fromEntries(lengths) },
      );
    }
    if (n > limits.maxBatch) {
      throw new ProblemError(
        'batch-too-large',
        413,
        'Batch larger than the plan allows',
        `This batch has ${n.toLocaleString('en-US')} points; the ${planTitle(limits.plan)} plan accepts at most ${limits.maxBatch.toLocaleString('en-US')} per request. Split it into requests of at most ${limits.maxBatch.toLocaleString('en-US')} points, or move to a larger plan on the Plan & billing page.`,
        { points: n, maxBatch: limits.maxBatch },
      );
    }

    const components = req.components ? [...req.components] : [...COMPONENTS];
    for (const c of components) if (!(COMPONENTS as readonly string[]).includes(c)) throw invalid(`Unknown component "${c}"; use some of ${COMPONENTS.join(', ')}.`);
    if (components.length === 0) throw invalid('components is empty; name at least one of ' + COMPONENTS.join(', ') + ' (or leave it out for all).');
    if (new Set(components).size !== components.length) throw invalid('components lists a component twice.');

    const options: TaskOptions = {
      method: req.method ?? 'exact',
      components,
      soundSpeed: req.soundSpeed ?? 'newtonian',
      maxwellResiduals: op !== 'regime' && req.maxwellResiduals === true,
      ...(op === 'invert' && req.tolerance != null ? { tolerance: req.tolerance } : {}),
      ...(op === 'invert' && req.maxEvaluations != null ? { maxEvaluations: req.maxEvaluations } : {}),
    };
    if (op !== 'invert' && (req.tolerance != null || req.maxEvaluations != null)) {
      throw invalid('tolerance and maxEvaluations apply to /v1/eos/invert only.');
    }

    const allowed = op === 'evaluate' ? EVALUATE_FIELDS : op === 'invert' ? INVERT_OUTPUT_FIELDS : REGIME_FIELDS;
    const requested = req.fields ? [...req.fields] : [...(op === 'evaluate' ? DEFAULT_EVALUATE_FIELDS : op === 'invert' ? DEFAULT_INVERT_FIELDS : DEFAULT_REGIME_FIELDS)];
    for (const f of requested) if (!allowed.includes(f)) throw invalid(`Unknown field "${f}" for ${op}; choose from ${allowed.join(', ')}.`, { allowedFields: allowed });
    if (requested.length === 0) throw invalid('fields is empty; name at least one output field (or leave it out for the default set).');
    if (new Set(requested).size !== requested.length) throw invalid('fields lists a field twice.');
    // regime: the groups asked for become the library's dotted columns (degeneracy.class, …)
    const fields = op === 'regime' ? regimeColumns(requested) : requested;

    let breakdown: TaskOutputs['breakdown'] = [];
    if (req.breakdown === true) {
      if (op === 'regime') throw invalid('breakdown applies to evaluate and invert only.');
      const perComponent = requested.filter((f) => (COMPONENT_FIELDS as readonly string[]).includes(f));
      const list = perComponent.length > 0 ? perComponent : [...COMPONENT_FIELDS];
      breakdown = components.map((component) => ({ component, fields: list }));
    }
    return {
      op,
      n,
      given,
      composition,
      options,
      outputs: { fields, breakdown, maxwell: options.maxwellResiduals, warningFlags: true },
      ...(inverseProblem ? { inverseProblem } : {}),
    };
  }

  /**
   * The binary form: input columns from the body as named by `inputs`, composition from columns
   * (abar, zbar), query numbers (abar, zbar) or a mixture name, output columns from `fields`.
   */
  prepareBinary(op: Operation, query: BinaryQuery, columns: Record<string, Float64Array>, limits: PlanLimits, savedNuclides?: ReadonlyArray<{ a: number; z: number; massFraction: number }>): PreparedBatch {
    const compositionColumns = ['abar', 'zbar'].filter((c) => c in columns);
    const sources = [compositionColumns.length > 0, query.abar !== undefined || query.zbar !== undefined, query.mixture !== undefined].filter(Boolean).length;
    if (sources !== 1) {
      throw invalid('Give the composition in exactly one way: abar and zbar columns in ?inputs=, abar and zbar numbers in the query, or ?mixture=<name>.');
    }
    let composition: CompositionRequest;
    if (compositionColumns.length > 0) {
      if (compositionColumns.length !== 2) throw invalid('The abar and zbar columns come together: name both in ?inputs=.');
      composition = { abar: columns['abar']!, zbar: columns['zbar']! };
    } else if (query.mixture !== undefined) {
      composition = savedNuclides ? { nuclides: savedNuclides } : { mixture: query.mixture };
    } else {
      if (query.abar === undefined || query.zbar === undefined) throw invalid('Give both abar and zbar in the query.');
      composition = { abar: query.abar, zbar: query.zbar };
    }
    const req: EosRequest = { composition };
    for (const name of GIVEN_NAMES) if (columns[name]) req[name] = columns[name];
    const names = query.fields ?? (op === 'evaluate' ? DEFAULT_EVALUATE_FIELDS : op === 'invert' ? DEFAULT_INVERT_FIELDS : REGIME_NUMERIC_COLUMNS);
    if (new Set(names).size !== names.length) throw invalid('fields lists a column twice.');
    const refs = names.map((name) => {
      const ref: ColumnRef | undefined =
        op === 'regime'
          ? name === 'warningFlags' ? { kind: 'warningFlags' } : REGIME_NUMERIC_COLUMNS.includes(name) ? { kind: 'field', field: name } : undefined
          : parseColumnRef(name, op === 'evaluate' ? EVALUATE_FIELDS : INVERT_OUTPUT_FIELDS);
      if (!ref) {
        const choices = op === 'regime' ? [...REGIME_NUMERIC_COLUMNS, 'warningFlags'].join(', ') : 'field names, component columns like ions.pressure, maxwell.energy, or warningFlags';
        throw invalid(`Unknown output column "${name}" for the binary form of ${op}; use ${choices}.`);
      }
      return { name, ref };
    });
    const top = refs.flatMap(({ ref }) => (ref.kind === 'field' ? [ref.field] : []));
    const batch = this.prepare(
      op,
      {
        ...req,
        components: query.components ?? null,
        method: query.method ?? null,
        soundSpeed: query.soundSpeed ?? null,
        tolerance: query.tolerance ?? null,
        maxEvaluations: query.maxEvaluations ?? null,
        // regime: the groups of the numeric columns asked for; the columns are set below
        fields: op === 'regime' ? [...new Set(top.map((c) => c.split('.')[0]!))].concat(top.length ? [] : ['degeneracy']) : top.length > 0 ? top : ['pressure'],
        maxwellResiduals: refs.some(({ ref }) => ref.kind === 'maxwell'),
      },
      limits,
    );
    batch.outputs.fields = top;
    const byComponent = new Map<string, string[]>();
    for (const { ref } of refs) {
      if (ref.kind !== 'component') continue;
      if (!batch.options.components.includes(ref.component)) throw invalid(`Column ${ref.component}.${ref.field} needs the ${ref.component} component in ?components=.`);
      const list = byComponent.get(ref.component) ?? [];
      list.push(ref.field);
      byComponent.set(ref.component, list);
    }
    batch.outputs.breakdown = [...byComponent].map(([component, fields]) => ({ component, fields }));
    batch.binaryColumns = refs;
    return batch;
  }

  private resolveComposition(c: CompositionRequest | null | undefined): PreparedBatch['composition'] {
    if (!c || typeof c !== 'object') throw invalidComposition('composition is required: { abar, zbar }, { nuclides: [...] } or { mixture: "<name>" }.');
    const shapes = [c.abar != null || c.zbar != null, c.nuclides != null, c.mixture != null].filter(Boolean).length;
    if (shapes !== 1) {
      throw invalidComposition('Give the composition in exactly one form: { abar, zbar }, { nuclides: [{ a, z, massFraction }], normalize? } or { mixture: "<name>" }.');
    }
    if (c.normalize != null && c.nuclides == null) throw invalidComposition('normalize applies to a nuclides list only.');
    if (c.mixture != null) {
      const mixture = findBuiltinMixture(c.mixture);
      if (!mixture) {
        throw invalidComposition(`Unknown mixture "${c.mixture}". Built-in mixtures: ${BUILTIN_MIXTURE_NAMES.join(', ')}.`, { mixtures: BUILTIN_MIXTURE_NAMES });
      }
      return { kind: 'nuclides', normalize: false, nuclides: mixture.nuclides.map(({ a, z, massFraction }) => ({ a, z, massFraction })) };
    }
    if (c.nuclides != null) {
      const list = c.nuclides;
      if (list.length === 0) throw invalidComposition('nuclides is empty; give at least one { a, z, massFraction }.');
      list.forEach((nu, j) => {
        if (!(nu.a >= 1)) throw invalidComposition(`nuclides[${j}].a = ${nu.a}: the mass number must be at least 1.`);
        if (!(nu.z >= 0) || nu.z > nu.a) throw invalidComposition(`nuclides[${j}] has z = ${nu.z} and a = ${nu.a}: the charge must lie in [0, a].`);
      });
      const normalize = c.normalize === true;
      // Fractions that apply to the whole batch are checked here: a wrong sum is a request error.
      // Per-point fractions are checked per point by the library (status MASS_FRACTIONS_INVALID).
      if (list.every((nu) => isScalar(nu.massFraction))) {
        const nuclides = list.map((nu) => ({ a: nu.a, z: nu.z, massFraction: firstValue(nu.massFraction) }));
        const sum = nuclides.reduce((s, nu) => s + nu.massFraction, 0);
        if (!normalize && Number.isFinite(sum) && Math.abs(sum - 1) > eos.MASS_FRACTION_TOLERANCE) {
          throw invalidComposition(
            `The mass fractions sum to ${sum}, not 1 (within ${eos.MASS_FRACTION_TOLERANCE}). Correct them, or send "normalize": true to rescale them to sum to 1.`,
            { massFractionSum: sum },
          );
        }
        try {
          eos.meanComposition(nuclides, { normalize });
        } catch (error) {
          throw invalidComposition(`${capitalize((error as Error).message)}.`);
        }
      }
      return { kind: 'nuclides', normalize, nuclides: list.map((nu) => ({ a: nu.a, z: nu.z, massFraction: nu.massFraction })) };
    }
    if (c.abar == null || c.zbar == null) throw invalidComposition('Give both abar and zbar (or a nuclides list, or a mixture name).');
    if (isScalar(c.abar) && isScalar(c.zbar)) {
      const problem = eos.meanCompositionProblem(firstValue(c.abar), firstValue(c.zbar));
      if (problem) throw invalidComposition(`${capitalize(problem)}; the model's domain is 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120).`, { abar: firstValue(c.abar), zbar: firstValue(c.zbar) });
    }
    return { kind: 'mean', abar: c.abar, zbar: c.zbar };
  }

  // ── execute ──────────────────────────────────────────────────────────────────────────────

  /**
   * Prepares (throws 4xx, recorded as a rejected request), admits the points against the quota
   * (429, nothing billed), runs the batch and settles the usage record exactly once.
   */
  async execute(key: ApiKeyContext, prepare: () => PreparedBatch | Promise<PreparedBatch>, ctx: ExecuteContext): Promise<BatchAnswer> {
    let batch: PreparedBatch;
    try {
      batch = await prepare();
    } catch (error) {
      this.recordRejected(key, ctx);
      throw error;
    }
    let ticket;
    try {
      ticket = await this.meter.admit(key, ctx.endpoint, batch.n);
      ctx.mark.recorded = true;
    } catch (error) {
      // the meter records its own quota refusals
      if (error instanceof ProblemError && error.problem.status === 429) ctx.mark.recorded = true;
      else this.recordRejected(key, ctx);
      throw error;
    }
    try {
      const answer = await this.run(batch, ctx.encoding, ctx.signal);
      ticket.succeed(performance.now() - ctx.startedAt);
      return answer;
    } catch (error) {
      ticket.fail(performance.now() - ctx.startedAt);
      throw error;
    }
  }

  private recordRejected(key: ApiKeyContext, ctx: ExecuteContext) {
    if (ctx.mark.recorded) return;
    ctx.mark.recorded = true;
    this.meter.recordRejected(key, ctx.endpoint, performance.now() - ctx.startedAt);
  }

  private tableAccuracyLoad: Promise<TableAccuracyMeta | null> | undefined;

  /** The configured table's accuracy report, read once (attributes only) on the first table request. */
  private tableAccuracy(file: string): Promise<TableAccuracyMeta | null> {
    this.tableAccuracyLoad ??= readTableAccuracy(file).then(tableAccuracyMeta, (error: unknown) => {
      this.tableAccuracyLoad = undefined; // a later request tries again
      // damaged, or of an older format: the method is unavailable here, not an internal error (the
      // file's path and the reason go to the log, not to the caller)
      console.error(`free-energy table ${file}: ${error instanceof Error ? error.message : String(error)}`);
      throw new ProblemError('method-not-available', 501, 'Method not available', 'The "table" method is not available on this gateway: its free-energy table could not be read (its operator can rebuild it with npm run build:table). Use "method": "exact".', { method: 'table' });
    });
    return this.tableAccuracyLoad;
  }

  /** The table and its accuracy report once both are loaded (then every table request uses them as they are). */
  private tableReady: { tableAccuracy: TableAccuracyMeta | null; table: FreeEnergyTable } | undefined;

  /** Reads the table and its accuracy report (once: both are kept, by tableAccuracy and the pool). */
  private async loadTable(file: string): Promise<{ tableAccuracy: TableAccuracyMeta | null; table: FreeEnergyTable | undefined }> {
    const [tableAccuracy, table] = await Promise.all([this.tableAccuracy(file), this.pool.tableForTasks()]);
    if (table) this.tableReady = { tableAccuracy, table };
    return { tableAccuracy, table };
  }

  /**
   * Loads the configured table now (called once a gateway process listens), so that the first
   * "table" request does not wait ~3 s for it. A table that cannot be read is reported, as before,
   * to the requests that ask for it.
   */
  async warmTable(): Promise<void> {
    const file = this.pool.tablePath;
    if (file && !this.tableReady) await this.loadTable(file).catch(() => undefined);
  }

  /** Runs a prepared batch in the pool and merges the chunks (no metering). */
  async run(batch: PreparedBatch, encoding: Encoding, signal?: AbortSignal | LazySignal): Promise<BatchAnswer> {
    const { n } = batch;
    let tableAccuracy: TableAccuracyMeta | null = null;
    let table: FreeEnergyTable | undefined;
    if (batch.options.method === 'table') {
      const file = this.pool.tablePath;
      if (!file) {
        throw new ProblemError('method-not-available', 501, 'Method not available', 'The "table" method is not available on this gateway: no free-energy table is configured (EOS_TABLE_PATH). Use "method": "exact".', { method: 'table' });
      }
      if (this.tableReady) ({ tableAccuracy, table } = this.tableReady);
      else ({ tableAccuracy, table } = await this.loadTable(file));
    }
    const size = this.chunkPoints;
    const chunks: Array<() => { task: EosTask; transfer: ArrayBuffer[] }> = [];
    for (let start = 0; start < n; start += size) {
      const end = Math.min(n, start + size);
      chunks.push(() => this.chunk(batch, start, end, encoding, table));
    }
    const results = await this.pool.runChunks(n, chunks, signal);
    const failure = results.find((r): r is EosTaskFailure => 'failure' in r);
    if (failure) {
      if (failure.failure === 'method-not-available') {
        throw new ProblemError('method-not-available', 501, 'Method not available yet', `The "${batch.options.method}" method is not available yet: ${failure.message}. Use "method": "exact".`, { method: batch.options.method });
      }
      throw invalid(failure.message);
    }
    return this.merge(batch, results as EosTaskResult[], encoding, tableAccuracy);
  }

  private chunk(batch: PreparedBatch, start: number, end: number, encoding: Encoding, table: FreeEnergyTable | undefined): { task: EosTask; transfer: ArrayBuffer[] } {
    const given: Record<string, Float64Array> = {};
    for (const k in batch.given) given[k] = sliceColumn(batch.given[k]!, start, end);
    const c = batch.composition;
    const composition: WireComposition =
      c.kind === 'mean'
        ? { kind: 'mean', abar: sliceColumn(c.abar, start, end), zbar: sliceColumn(c.zbar, start, end) }
        : { kind: 'nuclides', normalize: c.normalize, nuclides: c.nuclides.map((nu) => ({ a: nu.a, z: nu.z, massFraction: sliceColumn(nu.massFraction, start, end) })) };
    const o = batch.outputs;
    const task: EosTask = {
      op: batch.op,
      n: end - start,
      given,
      composition,
      options: batch.options,
      outputs: { fields: o.fields, breakdown: o.breakdown, maxwell: o.maxwell, warningFlags: o.warningFlags, encoding },
      detailLimit: DETAIL_LIMIT,
    };
    if (table) task.table = table;
    // listed only when the task goes to a thread: reading .buffer of a small typed array moves its
    // data off the JavaScript heap (~0.2 µs each), which a batch computed inline does not need
    return {
      task,
      get transfer() {
        return inputBuffers(task);
      },
    };
  }

  /**
   * merge() for a batch of one chunk (every small request): the chunk's columns, lists and counts as
   * they are (its lists already stop at DETAIL_LIMIT, its points start at 0).
   */
  private mergeOne(batch: PreparedBatch, r: EosTaskResult, encoding: Encoding, tableAccuracy: TableAccuracyMeta | null): BatchAnswer {
    const answer: BatchAnswer = {
      meta: answerMeta(
        batch, r.problem, r.computeMs, tableAccuracy,
        r.statusMessages.length < r.statusMessageCount || r.warnings.length < r.warningCount, r.statusMessageCount, r.warningCount,
      ),
      n: batch.n,
      encoding,
      fields: r.fields,
      components: batch.outputs.breakdown.length > 0 ? r.components : null,
      maxwellResiduals: batch.outputs.maxwell && r.maxwell ? r.maxwell : null,
      status: r.status,
      warningFlags: r.warningFlags,
      statusMessages: r.statusMessages,
      warnings: r.warnings,
    };
    if (batch.binaryColumns) answer.binaryColumns = batch.binaryColumns;
    return answer;
  }

  private merge(batch: PreparedBatch, results: EosTaskResult[], encoding: Encoding, tableAccuracy: TableAccuracyMeta | null): BatchAnswer {
    if (results.length === 1) return this.mergeOne(batch, results[0]!, encoding, tableAccuracy);
    const n = batch.n;
    const joinColumn = <C extends AnyColumn>(pick: (r: EosTaskResult) => C | undefined): C => {
      if (encoding === 'json') return { jsonParts: results.flatMap((r) => (pick(r) as JsonParts).jsonParts) } as C;
      const firstPart = pick(results[0]!);
      if (Array.isArray(firstPart)) return results.flatMap((r) => pick(r) as Array<string | null>) as C;
      const out = new Float64Array(n);
      let offset = 0;
      for (const r of results) {
        out.set(pick(r) as Float64Array, offset);
        offset += r.n;
      }
      return out as C;
    };
    const joinBytes = (pick: (r: EosTaskResult) => Uint8Array): Uint8Array => {
      const out = new Uint8Array(n);
      let offset = 0;
      for (const r of results) {
        out.set(pick(r), offset);
        offset += r.n;
      }
      return out;
    };
    const first = results[0]!;
    const fields: Record<string, AnyColumn> = {};
    for (const f of Object.keys(first.fields)) fields[f] = joinColumn((r) => r.fields[f]);
    let components: BatchAnswer['components'] = null;
    if (batch.outputs.breakdown.length > 0) {
      components = {};
      for (const { component, fields: list } of batch.outputs.breakdown) {
        components[component] = {};
        for (const f of list) components[component]![f] = joinColumn((r) => r.components[component]?.[f]);
      }
    }
    let maxwellResiduals: BatchAnswer['maxwellResiduals'] = null;
    if (batch.outputs.maxwell && first.maxwell) {
      maxwellResiduals = {};
      for (const k of MAXWELL_FIELDS) maxwellResiduals[k] = joinColumn((r) => r.maxwell?.[k]);
    }
    const statusMessages: StatusMessage[] = [];
    const warnings: PointWarning[] = [];
    let statusMessageCount = 0;
    let warningCount = 0;
    let computeMs = 0;
    let offset = 0;
    for (const r of results) {
      for (const m of r.statusMessages) if (statusMessages.length < DETAIL_LIMIT) statusMessages.push({ ...m, point: m.point + offset });
      for (const w of r.warnings) if (warnings.length < DETAIL_LIMIT) warnings.push({ ...w, point: w.point + offset });
      statusMessageCount += r.statusMessageCount;
      warningCount += r.warningCount;
      computeMs += r.computeMs;
      offset += r.n;
    }
    const meta = answerMeta(batch, first.problem, computeMs, tableAccuracy, statusMessages.length < statusMessageCount || warnings.length < warningCount, statusMessageCount, warningCount);
    return {
      meta,
      n,
      encoding,
      fields,
      components,
      maxwellResiduals,
      status: joinBytes((r) => r.status),
      warningFlags: joinBytes((r) => r.warningFlags),
      statusMessages,
      warnings,
      ...(batch.binaryColumns ? { binaryColumns: batch.binaryColumns } : {}),
    };
  }
}

function answerMeta(
  batch: PreparedBatch, problem: string | undefined, computeMs: number, tableAccuracy: TableAccuracyMeta | null, detailsTruncated: boolean,
  statusMessageCount: number, warningCount: number,
): Meta {
  return {
    operation: batch.op,
    modelVersion: eos.MODEL_VERSION,
    constantsSet: eos.constants.CONSTANTS_SET,
    method: batch.options.method,
    inverseProblem: batch.inverseProblem ?? problem ?? null,
    points: batch.n,
    components: batch.options.components,
    computeMs: Math.round(computeMs * 1000) / 1000,
    tableAccuracy,
    statusMessageCount,
    warningCount,
    detailsTruncated,
  };
}

/** The buffers of a task's input columns (each its own, from sliceColumn), to move to a thread. */
function inputBuffers(task: EosTask): ArrayBuffer[] {
  const transfer: ArrayBuffer[] = [];
  for (const k in task.given) transfer.push(task.given[k]!.buffer as ArrayBuffer);
  const c = task.composition;
  if (c.kind === 'mean') transfer.push(c.abar.buffer as ArrayBuffer, c.zbar.buffer as ArrayBuffer);
  else for (const nu of c.nuclides) transfer.push(nu.massFraction.buffer as ArrayBuffer);
  return transfer;
}

export interface BinaryQuery {
  inputs: string[];
  fields?: string[];
  components?: string[];
  method?: 'exact' | 'table';
  soundSpeed?: 'newtonian' | 'relativistic';
  mixture?: string;
  abar?: number;
  zbar?: number;
  tolerance?: number;
  maxEvaluations?: number;
}

function capitalize(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}
