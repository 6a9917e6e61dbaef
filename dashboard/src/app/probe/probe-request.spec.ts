import { FormControl } from '@angular/forms';

import { buildRequest, listsMatch, numberListError, numberListValidator, type ProbeFormValue } from './probe-request';

const base: ProbeFormValue = {
  mode: 'forward',
  density: '1e6, 1e7',
  temperature: '1e8',
  pair: 'density-energy',
  first: '1e6',
  second: '1e17',
  compositionKind: 'mixture',
  mixture: 'c12-o16',
  abar: 12,
  zbar: 6,
  nuclides: [],
  components: { electrons: true, positrons: true, ions: true, photons: true, coulomb: true },
  method: 'exact',
  fields: ['pressure', 'gamma1'],
  breakdown: false,
};

describe('number list validation', () => {
  const check = (text: string, variable: 'density' | 'temperature' | 'pressure' = 'density') =>
    new FormControl(text, numberListValidator(variable)).errors;

  it('accepts a number or a list', () => {
    expect(check('1e6')).toBeNull();
    expect(check('1e6, 2.5e7 3e8')).toBeNull();
  });

  it('explains what is wrong', () => {
    expect(numberListError(check(''), 'density')).toContain('Required');
    expect(numberListError(check('1e6, abc'), 'density')).toContain('numbers');
    expect(numberListError(check('-5', 'pressure'), 'pressure')).toContain('positive');
    expect(check('1e16')).toEqual({ outOfDomain: { min: 1e-12, max: 1e15 } });
    expect(numberListError(check('10', 'temperature'), 'temperature')).toContain('1e+3 to 1e+13 K');
  });

  it('matches list lengths', () => {
    expect(listsMatch('1, 2', '3')).toBe(true);
    expect(listsMatch('1, 2', '3, 4')).toBe(true);
    expect(listsMatch('1, 2', '3, 4, 5')).toBe(false);
  });
});

describe('buildRequest', () => {
  it('builds a forward request, leaving defaults out', () => {
    expect(buildRequest(base)).toEqual({
      operation: 'evaluate',
      body: {
        density: [1e6, 1e7],
        temperature: 1e8,
        composition: { mixture: 'c12-o16' },
        fields: ['density', 'temperature', 'pressure', 'gamma1'],
      },
    });
  });

  it('builds an inverse request from the chosen pair, with components, method and breakdown', () => {
    const request = buildRequest({
      ...base,
      mode: 'inverse',
      pair: 'pressure-temperature',
      first: '1e22',
      second: '1e7',
      compositionKind: 'mean',
      abar: 1.3,
      zbar: 1.1,
      components: { electrons: true, positrons: false, ions: true, photons: true, coulomb: false },
      method: 'table',
      breakdown: true,
    });
    expect(request).toEqual({
      operation: 'invert',
      body: {
        pressure: 1e22,
        temperature: 1e7,
        composition: { abar: 1.3, zbar: 1.1 },
        components: ['electrons', 'ions', 'photons'],
        method: 'table',
        fields: ['density', 'temperature', 'pressure', 'gamma1', 'iterations', 'converged'],
        breakdown: true,
      },
    });
  });

  it('sends a nuclide list, and nothing while a row is incomplete', () => {
    const nuclides = [
      { a: 12, z: 6, massFraction: 0.5 },
      { a: 16, z: 8, massFraction: 0.5 },
    ];
    expect(buildRequest({ ...base, compositionKind: 'nuclides', nuclides })?.body['composition']).toEqual({ nuclides });
    expect(buildRequest({ ...base, compositionKind: 'nuclides', nuclides: [{ a: 12, z: null, massFraction: 1 }] })).toBeNull();
  });
});
