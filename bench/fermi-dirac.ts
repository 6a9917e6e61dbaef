/**
 * Benchmark of eos/fermi-dirac.ts and eos/electron-positron.ts on one core: generalized integral sets
 * per second (F_{1/2}, F_{3/2}, F_{5/2} with first and second derivatives) over η ∈ [−50, 1e6],
 * β ∈ [1e-7, 2e3], and pairGas calls per second over log-uniform d ∈ [1e-13, 1e15], T ∈ [1e3, 1e13],
 * cold (no guess) and warm (previous η of a neighbouring point).
 * Times are CPU time of this process (process.cpuUsage), so that other load on the machine does not
 * inflate them. Run: node --import tsx bench/fermi-dirac.ts
 */
import { generalizedFermiDiracSet, FD_SECOND, FD_SET_LENGTH } from '../eos/fermi-dirac.js';
import { pairGas, createPairGasState } from '../eos/electron-positron.js';

/** CPU milliseconds used by this process so far. */
function cpuMs(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
}

const out = new Float64Array(FD_SET_LENGTH);
const N = 100000;
let rnd = lcg(7);
const etas = new Float64Array(N);
const betas = new Float64Array(N);
for (let i = 0; i < N; i++) {
  const r = rnd();
  etas[i] = r < 0.5 ? -50 + 90 * rnd() : Math.pow(10, 1.6 + 4.4 * rnd());
  betas[i] = Math.pow(10, -7 + 10.3 * rnd());
}
let sink = 0;
for (let i = 0; i < 20000; i++) sink += generalizedFermiDiracSet(etas[i], betas[i], out, FD_SECOND)[0];
let t0 = cpuMs();
for (let i = 0; i < N; i++) sink += generalizedFermiDiracSet(etas[i], betas[i], out, FD_SECOND)[0];
let dt = (cpuMs() - t0) / 1000;
console.log(`generalized sets (3 orders, 1st+2nd derivatives): ${(N / dt).toFixed(0)} /s, ${((dt / N) * 1e6).toFixed(2)} µs each`);
t0 = cpuMs();
for (let i = 0; i < N; i++) sink += generalizedFermiDiracSet(etas[i], betas[i], out, 0)[0];
dt = (cpuMs() - t0) / 1000;
console.log(`generalized sets (1st derivatives only):           ${(N / dt).toFixed(0)} /s, ${((dt / N) * 1e6).toFixed(2)} µs each`);

const st = createPairGasState();
const M = 40000;
rnd = lcg(11);
const ds = new Float64Array(M);
const Ts = new Float64Array(M);
for (let i = 0; i < M; i++) {
  ds[i] = Math.pow(10, -13 + 28 * rnd());
  Ts[i] = Math.pow(10, 3 + 10 * rnd());
}
for (let i = 0; i < 5000; i++) pairGas(ds[i], Ts[i], st);
t0 = cpuMs();
let iters = 0;
for (let i = 0; i < M; i++) {
  pairGas(ds[i], Ts[i], st);
  iters += st.iterations;
  sink += st.pressure;
}
dt = (cpuMs() - t0) / 1000;
console.log(`pairGas, cold start, random points:  ${(M / dt).toFixed(0)} calls/s, ${((dt / M) * 1e6).toFixed(2)} µs each, ${(iters / M).toFixed(2)} Newton iterations`);
// warm: a sweep in T at fixed d, each call starting from the previous η
t0 = cpuMs();
iters = 0;
let calls = 0;
for (let ld = -13; ld <= 15; ld += 0.25) {
  let guess: number | undefined;
  for (let lt = 3; lt <= 13; lt += 0.02) {
    pairGas(10 ** ld, 10 ** lt, st, guess);
    guess = st.eta;
    iters += st.iterations;
    calls++;
  }
}
dt = (cpuMs() - t0) / 1000;
console.log(`pairGas, warm start along T sweeps: ${(calls / dt).toFixed(0)} calls/s, ${((dt / calls) * 1e6).toFixed(2)} µs each, ${(iters / calls).toFixed(2)} Newton iterations`);
if (sink === 0.123) console.log('');
