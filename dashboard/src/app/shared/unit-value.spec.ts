import { UnitValuePipe, formatNumber, superscript } from './unit-value';

describe('unit-value', () => {
  it('writes large and small values with a power of ten', () => {
    expect(formatNumber(2.656826403316559e22)).toBe('2.657×10²²');
    expect(formatNumber(5.745880978072154e-4)).toBe('5.746×10⁻⁴');
    expect(superscript(-12)).toBe('⁻¹²');
  });

  it('keeps moderate values plain and marks missing ones', () => {
    expect(formatNumber(1.5709483044330215)).toBe('1.571');
    expect(formatNumber(0)).toBe('0');
    expect(formatNumber(null)).toBe('—');
    expect(formatNumber(Number.NaN)).toBe('—');
  });

  it('adds the unit', () => {
    const pipe = new UnitValuePipe();
    expect(pipe.transform(2.656826403316559e22, 'erg/cm³')).toBe('2.657×10²² erg/cm³');
    expect(pipe.transform(null, 'K')).toBe('—');
  });
});
