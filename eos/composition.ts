/**
 * Composition of fully ionized matter: mean mass number Abar, mean charge Zbar and electron fraction
 * Ye = Zbar/Abar, from (Abar, Zbar) directly or from a list of nuclides with mass fractions:
 *   Abar = 1/Σ(X_i/A_i),  Zbar = Abar·Σ(X_i Z_i/A_i)
 * (the standard number-weighted means; e.g. Clayton 1968, "Principles of Stellar Evolution and
 * Nucleosynthesis", ch. 2; PHYSICS.md §1). Exact to rounding (a few ulp).
 *
 * Domain (PHYSICS.md §1): 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120). Mass fractions must be
 * non-negative and sum to 1 within 1e-6; with `normalize` they are rescaled instead. Fractions that
 * pass the tolerance are still rescaled to sum exactly to 1, so that Abar, Zbar and the per-species
 * abundances Y_i = X_i/A_i used by the Coulomb mixing rule are mutually consistent.
 *
 * Validation never throws for a per-point problem: each point gets a reason code and a message
 * that names the offending value. Structural problems (wrong shapes, no nuclides) throw.
 */

export const ABAR_MIN = 1;
export const ABAR_MAX = 300;
export const ZBAR_MIN = 1;
export const ZBAR_MAX = 120;
/** Allowed |ΣX − 1| before a point is rejected (unless `normalize`). */
export const MASS_FRACTION_TOLERANCE = 1e-6;

/** A number or an array-like of numbers (broadcast against the other inputs). */
export type Column = number | ArrayLike<number>;

export interface Nuclide {
  /** Mass number A (> 0). */
  a: number;
  /** Charge number Z (0 ≤ Z ≤ A). */
  z: number;
  /** Mass fraction X, a number or one value per point. */
  massFraction: Column;
}

export interface MeanCompositionInput {
  abar: Column;
  zbar: Column;
}
export interface NuclidesInput {
  nuclides: readonly Nuclide[];
  /** Rescale mass fractions that do not sum to 1 instead of rejecting the point. */
  normalize?: boolean;
}
export type CompositionInput = MeanCompositionInput | NuclidesInput;

/** Per-point reason codes of `resolveComposition` (0 = valid). */
export const COMPOSITION_OK = 0;
export const COMPOSITION_OUT_OF_DOMAIN = 1;
export const COMPOSITION_BAD_FRACTIONS = 2;

export interface MeanComposition {
  abar: number;
  zbar: number;
  ye: number;
}

/** Length of a column: 1 for a number. */
export function columnLength(value: Column): number {
  return typeof value === 'number' ? 1 : value.length;
}

/**
 * The common length of broadcast columns: every array-like must have length n or 1. Throws with
 * the offending names and lengths otherwise (a structural error, not a per-point one).
 */
export function broadcastLength(columns: ReadonlyArray<readonly [string, Column]>): number {
  let n = 1;
  for (const [, c] of columns) {
    const len = columnLength(c);
    if (len !== 1) {
      if (n === 1) n = len;
      else if (len !== n) {
        const desc = columns.map(([name, col]) => `${name}: ${columnLength(col)}`).join(', ');
        throw new Error(`input arrays cannot be broadcast together (${desc}); give arrays of one common length, or scalars`);
      }
    }
  }
  for (const [, c] of columns) if (columnLength(c) === 0) return 0;
  return n;
}

/**
 * A column of length n for reading only: the input itself when it already is a Float64Array of
 * length n (no copy: the batch paths read their inputs once), else a copy as toFloat64Column.
 */
export function readFloat64Column(value: Column, n: number, name: string): Float64Array {
  if (value instanceof Float64Array && value.length === n) return value;
  return toFloat64Column(value, n, name);
}

/** Copy a column into a new Float64Array of length n, broadcasting a scalar or a length-1 array. */
export function toFloat64Column(value: Column, n: number, name: string): Float64Array {
  const out = new Float64Array(n);
  if (typeof value === 'number') {
    out.fill(value);
    return out;
  }
  if (value === null || value === undefined || typeof (value as ArrayLike<number>).length !== 'number') {
    throw new Error(`${name} must be a number or an array of numbers`);
  }
  if (value.length === 1) {
    out.fill(Number(value[0]));
    return out;
  }
  if (value.length !== n) throw new Error(`${name} has length ${value.length}, expected ${n} or 1`);
  for (let i = 0; i < n; i++) out[i] = Number(value[i]);
  return out;
}

export function isNuclidesInput(c: CompositionInput): c is NuclidesInput {
  return Array.isArray((c as NuclidesInput).nuclides);
}

/** Why (Abar, Zbar) lies outside the domain, or null when it is inside. */
export function meanCompositionProblem(abar: number, zbar: number): string | null {
  if (!Number.isFinite(abar)) return `Abar = ${abar} is not a finite number`;
  if (!Number.isFinite(zbar)) return `Zbar = ${zbar} is not a finite number`;
  if (abar < ABAR_MIN || abar > ABAR_MAX) return `Abar = ${abar} is outside [${ABAR_MIN}, ${ABAR_MAX}]`;
  if (zbar < ZBAR_MIN) return `Zbar = ${zbar} is below ${ZBAR_MIN}`;
  if (zbar > abar) return `Zbar = ${zbar} exceeds Abar = ${abar} (more than one proton per nucleon)`;
  if (zbar > ZBAR_MAX) return `Zbar = ${zbar} exceeds ${ZBAR_MAX}`;
  return null;
}

/**
 * Abar, Zbar, Ye of one nuclide list with scalar mass fractions. Throws an Error naming the problem
 * (use `resolveComposition` for per-point handling).
 */
export function meanComposition(nuclides: readonly Nuclide[], options: { normalize?: boolean } = {}): MeanComposition {
  const r = resolveComposition({ nuclides, normalize: options.normalize }, 1);
  if (r.reason[0] !== COMPOSITION_OK) throw new Error(r.messages[0]);
  return { abar: r.abar[0], zbar: r.zbar[0], ye: r.ye[0] };
}

/** Per-point composition, ready for the equation-of-state kernels (read only: the columns may be the caller's input arrays). */
export interface ResolvedComposition {
  n: number;
  abar: Float64Array;
  zbar: Float64Array;
  ye: Float64Array;
  /** Largest charge present at the point (Zbar for (Abar, Zbar) input). */
  zmax: Float64Array;
  /** 0 valid, COMPOSITION_OUT_OF_DOMAIN, COMPOSITION_BAD_FRACTIONS. */
  reason: Uint8Array;
  /**
   * What is wrong at each point whose reason is not 0, with the values. Sparse: only those points
   * are set (filling a new array of n strings cost ~30 ns a point, more than a table point's physics).
   */
  messages: string[];
  /**
   * For nuclide input: species charges and abundances Y = X/A per point (row-major, n × count),
   * normalized to ΣX = 1. Null for (Abar, Zbar) input, which the Coulomb term treats as one species
   * of charge Zbar.
   */
  species: { count: number; a: Float64Array; z: Float64Array; y: Float64Array } | null;
}

/** Resolve a composition input to per-point columns of length n (broadcasting scalars). */
export function resolveComposition(input: CompositionInput, n: number): ResolvedComposition {
  const ye = new Float64Array(n);
  const reason = new Uint8Array(n);
  const messages: string[] = [];
  if (input === null || typeof input !== 'object') throw new Error('composition must be { abar, zbar } or { nuclides: [...] }');

  if (!isNuclidesInput(input)) {
    const mi = input as MeanCompositionInput;
    if (mi.abar === undefined || mi.zbar === undefined) {
      throw new Error('composition must give both abar and zbar, or a nuclides list');
    }
    // read-only views of the inputs where they already are Float64Arrays of length n (the columns
    // of a ResolvedComposition are never written after this function)
    const a = readFloat64Column(mi.abar, n, 'abar');
    const z = readFloat64Column(mi.zbar, n, 'zbar');
    const abar = a, zbar = z, zmax = z;
    for (let i = 0; i < n; i++) {
      const ai = a[i], zi = z[i];
      ye[i] = zi / ai;
      // inside the domain (the common case) without building a message
      if (ai >= ABAR_MIN && ai <= ABAR_MAX && zi >= ZBAR_MIN && zi <= ai && zi <= ZBAR_MAX) continue;
      const problem = meanCompositionProblem(ai, zi);
      if (problem !== null) {
        reason[i] = COMPOSITION_OUT_OF_DOMAIN;
        messages[i] = problem;
      }
    }
    return { n, abar, zbar, ye, zmax, reason, messages, species: null };
  }

  const list = input.nuclides;
  const m = list.length;
  if (m === 0) throw new Error('nuclides list is empty; give at least one { a, z, massFraction }');
  const A = new Float64Array(m);
  const Z = new Float64Array(m);
  const X: Float64Array[] = [];
  let structural = '';
  for (let j = 0; j < m; j++) {
    const nu = list[j];
    if (nu === null || typeof nu !== 'object') throw new Error(`nuclides[${j}] must be an object { a, z, massFraction }`);
    A[j] = Number(nu.a);
    Z[j] = Number(nu.z);
    if (!(A[j] > 0) || !Number.isFinite(A[j])) structural ||= `nuclides[${j}].a = ${nu.a} must be a positive finite mass number`;
    else if (!(Z[j] >= 0) || !Number.isFinite(Z[j])) structural ||= `nuclides[${j}].z = ${nu.z} must be a non-negative finite charge`;
    else if (Z[j] > A[j]) structural ||= `nuclides[${j}] has z = ${nu.z} > a = ${nu.a}`;
    if (nu.massFraction === undefined) throw new Error(`nuclides[${j}].massFraction is missing`);
    X.push(toFloat64Column(nu.massFraction, n, `nuclides[${j}].massFraction`));
  }
  const normalize = input.normalize === true;
  const abar = new Float64Array(n);
  const zbar = new Float64Array(n);
  const zmax = new Float64Array(n);
  const y = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    if (structural) {
      reason[i] = COMPOSITION_BAD_FRACTIONS;
      messages[i] = structural;
      abar[i] = zbar[i] = ye[i] = zmax[i] = NaN;
      continue;
    }
    let sum = 0;
    let bad = '';
    for (let j = 0; j < m; j++) {
      const x = X[j][i];
      if (!Number.isFinite(x)) { bad ||= `mass fraction of nuclide ${j} (A=${A[j]}, Z=${Z[j]}) is ${x}`; continue; }
      if (x < 0) { bad ||= `mass fraction of nuclide ${j} (A=${A[j]}, Z=${Z[j]}) is negative (${x})`; continue; }
      sum += x;
    }
    if (!bad && !(sum > 0)) bad = 'mass fractions are all zero';
    if (!bad && !normalize && Math.abs(sum - 1) > MASS_FRACTION_TOLERANCE) {
      bad = `mass fractions sum to ${sum}, not 1 within ${MASS_FRACTION_TOLERANCE}; fix them or pass normalize: true`;
    }
    if (bad) {
      reason[i] = COMPOSITION_BAD_FRACTIONS;
      messages[i] = bad;
      abar[i] = zbar[i] = ye[i] = zmax[i] = NaN;
      continue;
    }
    let sy = 0;
    let syz = 0;
    let zm = 0;
    for (let j = 0; j < m; j++) {
      const yj = X[j][i] / (sum * A[j]);
      y[i * m + j] = yj;
      sy += yj;
      syz += yj * Z[j];
      if (yj > 0 && Z[j] > zm) zm = Z[j];
    }
    abar[i] = 1 / sy;
    zbar[i] = syz / sy;
    ye[i] = syz;
    zmax[i] = zm;
    const problem = meanCompositionProblem(abar[i], zbar[i]);
    if (problem !== null) {
      reason[i] = COMPOSITION_OUT_OF_DOMAIN;
      messages[i] = `the mixture has ${problem}`;
    }
  }
  return { n, abar, zbar, ye, zmax, reason, messages, species: { count: m, a: A, z: Z, y } };
}
