import { test } from 'node:test';
import assert from 'node:assert/strict';
import * as C from '../../eos/constants.js';

function close(actual: number, expected: number, rel: number, what: string) {
  const err = Math.abs(actual - expected) / Math.abs(expected);
  assert.ok(err <= rel, `${what}: ${actual} vs ${expected} (relative error ${err.toExponential(2)} > ${rel})`);
}

// Every expected value below is the CODATA 2018 recommended value as published by NIST
// (physics.nist.gov/cuu/Constants, 2018 adjustment), converted from SI to CGS by powers of ten.
test('exact SI-defining constants (CODATA 2018)', () => {
  assert.equal(C.PLANCK_H, 6.62607015e-27);
  assert.equal(C.BOLTZMANN_K, 1.380649e-16);
  assert.equal(C.SPEED_OF_LIGHT, 2.99792458e10);
  assert.equal(C.AVOGADRO, 6.02214076e23);
  assert.equal(C.ELEMENTARY_CHARGE_SI, 1.602176634e-19);
});

test('measured masses (CODATA 2018)', () => {
  assert.equal(C.ELECTRON_MASS, 9.1093837015e-28);
  assert.equal(C.ATOMIC_MASS_UNIT, 1.6605390666e-24);
});

test('derived constants agree with their CODATA 2018 values', () => {
  // electron mass energy equivalent in MeV: 0.51099895000 MeV
  close(C.ELECTRON_REST_ENERGY / (C.ELECTRON_VOLT * 1e6), 0.51099895, 1e-10, 'm_e c^2 [MeV]');
  // Stefan–Boltzmann constant 5.670374419e-8 W m^-2 K^-4 = 5.670374419e-5 erg cm^-2 s^-1 K^-4
  close(C.STEFAN_BOLTZMANN, 5.670374419e-5, 1e-9, 'sigma_SB');
  // radiation constant 4σ/c = 7.565733250e-16 J m^-3 K^-4 = 7.565733250e-15 erg cm^-3 K^-4
  close(C.RADIATION_A, 7.56573325e-15, 1e-9, 'a');
  // reduced Planck constant 1.054571817e-34 J s
  close(C.HBAR, 1.054571817e-27, 1e-9, 'hbar');
  // fine-structure constant 7.2973525693e-3 (Gaussian e^2/hbar c differs by mu0's 5.5e-10 drift)
  close(C.FINE_STRUCTURE, 7.2973525693e-3, 1e-9, 'alpha');
  // elementary charge in esu: 4.803204713e-10 (PHYSICS.md §1, derived from the SI value)
  close(C.ELEMENTARY_CHARGE, 4.803204713e-10, 1e-9, 'e [esu]');
  // reduced Compton wavelength 3.8615926796e-13 m = 3.8615926796e-11 cm
  close(C.ELECTRON_COMPTON_REDUCED, 3.8615926796e-11, 1e-9, 'lambda_C/2pi');
  // atomic mass constant energy equivalent 931.49410242 MeV
  close((C.ATOMIC_MASS_UNIT * C.SPEED_OF_LIGHT ** 2) / (C.ELECTRON_VOLT * 1e6), 931.49410242, 1e-9, 'm_u c^2 [MeV]');
});

test('the constants record names its set', () => {
  assert.equal(C.constants.set, 'CODATA 2018');
  assert.ok(Object.isFrozen(C.constants));
});
