/**
 * The isotherm check of (P, T) → ρ in invert.ts: is P(ρ) = P* unique on the isotherm T? Where the ion
 * Coulomb correction (Potekhin & Chabrier 2000) outweighs the ideal gases, ∂P/∂ρ|_T ≤ 0 and P(ρ) has a
 * dip; the scan samples the isotherm and says whether P* lies in the dip's range.
 *
 * Resumable like invert-search.ts: `start` names the first ln ρ to evaluate (or ends at once), each
 * `next` takes the state there and names the following one, so `invert` can run one scan per point
 * with the JavaScript kernel (`run`) or many side by side with the table method's batched loop.
 */
import { STATUS } from './state.js';
import { electronCoupling } from './coulomb.js';

/**
 * Highest temperature at which ∂P/∂ρ|_T ≤ 0 occurs anywhere in the domain, measured on fine ρ-T
 * grids: 5.6e3 K for Z = 1, 2.2e4 K (Z = 2), 1.4e5 K (Z = 6), 1.3e6 K (Z = 26), 4.0e6 K (Z = 60),
 * 1.0e7 K (Z = 120), nearly independent of A. Isotherms above min(2e7, 1.2e4·Z_max²) K — at least
 * twice the measured limits — are monotone and are not scanned.
 */
export const COULOMB_INSTABILITY_T_MAX = 2e7;
export function coulombInstabilityTMax(zmax: number): number {
  return Math.min(COULOMB_INSTABILITY_T_MAX, 1.2e4 * zmax * zmax);
}
const SCAN_STEP = 0.25 * Math.LN10;
/** Refinements of one step at most (bisections). */
const MAX_DEPTH = 4;

/** `start`/`next`: evaluate at ln ρ = `x` next. */
export const SCAN_EVALUATE = -1;
/** `start`/`next`: the scan is over (read status, unique, monotone, evaluations). */
export const SCAN_DONE = 0;

/** What the scan reads of an evaluation at (ρ, T). */
export interface IsothermSample {
  rho: number;
  P: number;
  dPdRho: number;
  /** Electron degeneracy η and the Coulomb pressure: where η > 20 and P > 20 |P_Coulomb| the scan ends. */
  eta: number;
  coulombP: number;
}

/**
 * Scans ln ρ upward in steps of 0.25 dex from where the coupling Γ(ρ) reaches (1 + Z)/3 (below, the
 * ideal gases dominate and P rises with ρ) until the electrons are degenerate and outweigh the
 * Coulomb term by 20. A step whose secant slope falls below half the smaller end slope is bisected
 * (up to 4 times), so narrow dips are not missed. If P decreases somewhere, P* is ambiguous when it
 * lies between the local minimum and maximum, bounded from the samples and their slopes (and widened
 * by 5% of their difference).
 */
export class IsothermScan {
  status = 0;
  unique = true;
  monotone = true;
  evaluations = 0;
  /** Where to evaluate next (ln ρ; evaluate at ρ = exp(min(x, lnRhoMax)), T). */
  x = NaN;
  T = NaN;
  lnRhoMax = NaN;
  private target = NaN;
  private prevP = NaN;
  private prevS = NaN;
  private prevX = NaN;
  private pMax = -Infinity;
  private pMin = Infinity;
  private sawDip = false;
  /** The coarse step's start and the values there; the end of the step being refined. */
  private x1 = NaN;
  private p1 = NaN;
  private s1 = NaN;
  private stepEnd = NaN;
  private started = false;
  // the pending bisections: a stack of segments [a, b] with the values at a, their depth and stage
  // (0: evaluate b; 1: b evaluated; 2: the left half done, so the state is at the midpoint; 3: both halves done)
  private readonly fa = new Float64Array(MAX_DEPTH + 1);
  private readonly fpa = new Float64Array(MAX_DEPTH + 1);
  private readonly fsa = new Float64Array(MAX_DEPTH + 1);
  private readonly fb = new Float64Array(MAX_DEPTH + 1);
  private readonly stage = new Int8Array(MAX_DEPTH + 1);
  private depth = -1;
  // the last evaluation (what the per-point kernel would hold)
  private last: IsothermSample = { rho: NaN, P: NaN, dPdRho: NaN, eta: NaN, coulombP: NaN };

  /**
   * Begins the scan of isotherm T for target P* (zmax: the largest nuclear charge; abar, zbar: the
   * mean composition; [lnRhoMin, lnRhoMax]: the density bracket). Returns SCAN_EVALUATE or SCAN_DONE.
   */
  start(T: number, target: number, zmax: number, abar: number, zbar: number, lnRhoMin: number, lnRhoMax: number): number {
    this.status = 0;
    this.unique = true;
    this.monotone = true;
    this.evaluations = 0;
    this.prevP = NaN;
    this.prevS = NaN;
    this.prevX = NaN;
    this.pMax = -Infinity;
    this.pMin = Infinity;
    this.sawDip = false;
    this.depth = -1;
    this.started = false;
    this.T = T;
    this.target = target;
    this.lnRhoMax = lnRhoMax;
    const z = Math.max(zmax, zbar);
    if (T > coulombInstabilityTMax(z)) return SCAN_DONE;
    const ge1 = electronCoupling(1, T, zbar / abar);
    const g0 = (1 + zbar) / 3 / (Math.pow(z, 5 / 3) * ge1);
    const x = Math.max(lnRhoMin, 3 * Math.log(g0));
    if (x >= lnRhoMax) return SCAN_DONE;
    this.x = x;
    return SCAN_EVALUATE;
  }

  /**
   * The status of a (P, T) → ρ solution after this scan, from the search's (OK or NOT_MONOTONE): the
   * scan's failure; NOT_MONOTONE where P* lies in a dip's range; OK where the search saw a decrease
   * but the isotherm is monotone.
   */
  verdict(searchStatus: number): number {
    if (this.status > 0) return this.status;
    if (!this.unique) return STATUS.NOT_MONOTONE;
    if (searchStatus === STATUS.NOT_MONOTONE && this.monotone) return STATUS.OK;
    return searchStatus;
  }

  /** The density to evaluate at for `x`. */
  density(): number {
    return Math.exp(Math.min(this.x, this.lnRhoMax));
  }

  /** Takes the evaluation at `x` (st: STATUS.OK or the failure; s: its values when OK). */
  next(st: number, s: IsothermSample): number {
    this.evaluations++;
    if (st !== STATUS.OK) {
      this.status = st;
      return SCAN_DONE;
    }
    const l = this.last;
    l.rho = s.rho; l.P = s.P; l.dPdRho = s.dPdRho; l.eta = s.eta; l.coulombP = s.coulombP;
    if (!this.started) {
      this.started = true;
      this.observe(l.P, l.rho * l.dPdRho);
      this.x1 = this.x;
      this.p1 = l.P;
      this.s1 = l.rho * l.dPdRho;
      return this.nextStep();
    }
    return this.resume();
  }

  /** The next coarse step from x1, or the end. */
  private nextStep(): number {
    if (!(this.x1 < this.lnRhoMax)) return this.finish();
    this.stepEnd = Math.min(this.lnRhoMax, this.x1 + SCAN_STEP);
    this.push(this.x1, this.p1, this.s1, this.stepEnd);
    return this.resume();
  }

  private push(a: number, pa: number, sa: number, b: number): void {
    const d = ++this.depth;
    this.fa[d] = a; this.fpa[d] = pa; this.fsa[d] = sa; this.fb[d] = b; this.stage[d] = 0;
  }

  /** Works through the pending segments until one needs an evaluation or the step is done. */
  private resume(): number {
    const l = this.last;
    for (;;) {
      if (this.depth < 0) {
        // the coarse step is done: the state is at its end
        this.x1 = this.stepEnd;
        this.p1 = l.P;
        this.s1 = l.rho * l.dPdRho;
        if (l.eta > 20 && l.dPdRho > 0 && l.P > 20 * Math.abs(l.coulombP)) return this.finish();
        return this.nextStep();
      }
      const d = this.depth;
      switch (this.stage[d]) {
        case 0:
          this.stage[d] = 1;
          this.x = this.fb[d];
          return SCAN_EVALUATE;
        case 1: {
          const p2 = l.P, s2 = l.rho * l.dPdRho;
          const secant = (p2 - this.fpa[d]) / (this.fb[d] - this.fa[d]);
          if (d < MAX_DEPTH && this.fsa[d] > 0 && s2 > 0 && secant < 0.5 * Math.min(this.fsa[d], s2)) {
            // refine: the left half (feeds samples in order), then the right half
            this.stage[d] = 2;
            this.push(this.fa[d], this.fpa[d], this.fsa[d], 0.5 * (this.fa[d] + this.fb[d]));
            continue;
          }
          this.observe(p2, s2);
          this.depth--;
          continue;
        }
        case 2:
          // the left half is done and the state is at the midpoint
          this.stage[d] = 3;
          this.push(0.5 * (this.fa[d] + this.fb[d]), l.P, l.rho * l.dPdRho, this.fb[d]);
          continue;
        default:
          this.depth--;
      }
    }
  }

  private finish(): number {
    if (!this.sawDip) return SCAN_DONE;
    this.monotone = false;
    const pad = 0.05 * Math.abs(this.pMax - this.pMin);
    this.unique = !(this.target >= this.pMin - pad && this.target <= this.pMax + pad);
    return SCAN_DONE;
  }

  private observe(p: number, slope: number): void {
    const x = Math.log(this.last.rho);
    const decreasing = !(slope > 0) || p <= this.prevP;
    if (decreasing) {
      // Bound the local extremes between samples by a first-order step from the neighbours: a
      // conservative widening (it may flag a few unique targets as ambiguous, never the reverse
      // for dips resolved by the samples).
      if (!this.sawDip && Number.isFinite(this.prevP)) {
        this.pMax = Math.max(this.pMax, this.prevP + Math.max(this.prevS, 0) * (x - this.prevX));
      }
      this.sawDip = true;
      this.pMax = Math.max(this.pMax, p);
      this.pMin = Math.min(this.pMin, p - Math.abs(Math.min(slope, 0)) * SCAN_STEP, p);
    } else if (!this.sawDip) {
      this.pMax = p;
    }
    this.prevP = p;
    this.prevS = slope;
    this.prevX = x;
  }
}
