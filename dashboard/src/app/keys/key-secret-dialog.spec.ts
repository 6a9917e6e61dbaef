import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';

import { KeySecretDialog, type KeySecretDialogData } from './key-secret-dialog';

// Test data invented for this spec (not a real key).
const TOKEN = 'fwk_ab12cd34_0123456789abcdefghijklmnopqrstuv';

async function render(data: KeySecretDialogData): Promise<HTMLElement> {
  TestBed.configureTestingModule({
    providers: [
      { provide: MAT_DIALOG_DATA, useValue: data },
      { provide: MatDialogRef, useValue: { close: () => undefined } },
      { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
    ],
  });
  const fixture = TestBed.createComponent(KeySecretDialog);
  await fixture.whenStable();
  return fixture.nativeElement as HTMLElement;
}

describe('KeySecretDialog', () => {
  it('shows the token once, without a rotation note for a new key', async () => {
    const root = await render({ name: 'cluster runs', token: TOKEN, previousSecretValidUntil: null });
    expect((root.querySelector('input.token') as HTMLInputElement).value).toBe(TOKEN);
    expect(root.textContent).not.toContain('previous secret');
  });

  it('after a rotation, writes the grace end as the Keys table writes times, not in the browser locale format', async () => {
    // noon UTC: the same calendar day in every time zone the tests may run in
    const root = await render({ name: 'cluster runs', token: TOKEN, previousSecretValidUntil: '2026-12-03T12:00:00.000Z' });
    const note = Array.from(root.querySelectorAll('p')).find((p) => p.textContent?.includes('previous secret'))?.textContent ?? '';
    expect(note).toMatch(/keeps working until 3 Dec 2026, \d{2}:\d{2}, so you can/);
    expect(note).not.toContain('12/3/2026');
  });
});
