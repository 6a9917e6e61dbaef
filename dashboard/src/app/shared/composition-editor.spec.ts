import { TestBed } from '@angular/core/testing';

import { CompositionEditor, compositionStats, nuclideList, nuclideRow } from './composition-editor';

describe('compositionStats', () => {
  it('computes Abar, Zbar and Ye of C/O 50/50 by mass', () => {
    const s = compositionStats([
      { a: 12, z: 6, massFraction: 0.5 },
      { a: 16, z: 8, massFraction: 0.5 },
    ])!;
    const abar = 1 / (0.5 / 12 + 0.5 / 16); // 13.714…
    expect(s.abar).toBeCloseTo(abar, 12);
    expect(s.abar).toBeCloseTo(13.7142857, 6);
    expect(s.zbar).toBeCloseTo(abar * (0.5 * 6 / 12 + 0.5 * 8 / 16), 12);
    expect(s.zbar).toBeCloseTo(6.8571429, 6);
    expect(s.ye).toBeCloseTo(0.5, 12);
    expect(s.fractionSum).toBe(1);
  });

  it('computes the hydrogen–helium mixture (X = 0.75, Y = 0.25)', () => {
    const s = compositionStats([
      { a: 1, z: 1, massFraction: 0.75 },
      { a: 4, z: 2, massFraction: 0.25 },
    ])!;
    // Σ X/A = 0.75 + 0.0625 = 0.8125; Σ XZ/A = 0.75 + 0.125 = 0.875
    expect(s.abar).toBeCloseTo(1 / 0.8125, 12);
    expect(s.zbar).toBeCloseTo(0.875 / 0.8125, 12);
    expect(s.ye).toBeCloseTo(0.875, 12);
  });

  it('is null until a row has A and X', () => {
    expect(compositionStats([{ a: null, z: 6, massFraction: 0.5 }])).toBeNull();
    expect(compositionStats([])).toBeNull();
  });
});

describe('nuclide validation', () => {
  it('requires the fractions to sum to 1 within 1e-6', () => {
    expect(nuclideList().valid).toBe(true);
    const off = nuclideList([nuclideRow(12, 6, 0.5), nuclideRow(16, 8, 0.4999)]);
    expect(off.hasError('fractionSum')).toBe(true);
    const close = nuclideList([nuclideRow(12, 6, 0.5), nuclideRow(16, 8, 0.4999995)]);
    expect(close.valid).toBe(true);
  });

  it('refuses Z above A', () => {
    const row = nuclideRow(4, 5, 1);
    expect(row.hasError('chargeAboveMass')).toBe(true);
    expect(nuclideRow(4, 2, 1).valid).toBe(true);
  });
});

describe('CompositionEditor', () => {
  it('shows Abar, Zbar and Ye live and updates them as rows change', async () => {
    const rows = nuclideList();
    const fixture = TestBed.createComponent(CompositionEditor);
    fixture.componentRef.setInput('rows', rows);
    await fixture.whenStable();
    const text = () => (fixture.nativeElement as HTMLElement).querySelector('.stats')!.textContent!;
    expect(text()).toContain('Abar 13.714');
    expect(text()).toContain('Zbar 6.8571');
    expect(text()).toContain('Ye 0.5');

    rows.at(1).controls.massFraction.setValue(0.4);
    await fixture.whenStable();
    expect((fixture.nativeElement as HTMLElement).textContent).toContain('must sum to 1');

    rows.clear();
    rows.push(nuclideRow(4, 2, 1));
    await fixture.whenStable();
    expect(text()).toContain('Abar 4');
    expect(text()).toContain('Ye 0.5');
  });

  it('adds and removes rows', async () => {
    const rows = nuclideList();
    const fixture = TestBed.createComponent(CompositionEditor);
    fixture.componentRef.setInput('rows', rows);
    await fixture.whenStable();
    fixture.componentInstance.add();
    expect(rows.length).toBe(3);
    fixture.componentInstance.remove(0);
    expect(rows.length).toBe(2);
  });
});
