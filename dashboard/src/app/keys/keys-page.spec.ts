import { TestBed } from '@angular/core/testing';

import { KeysPage } from './keys-page';

describe('KeysPage', () => {
  it('is an honest placeholder naming the issue that delivers it', async () => {
    const fixture = TestBed.createComponent(KeysPage);
    await fixture.whenStable();
    const page = fixture.nativeElement as HTMLElement;
    expect(page.querySelector('h1')?.textContent).toBe('Keys');
    expect(page.querySelector('p')?.textContent).toBe('This page arrives with issue 6.');
  });
});
