import { TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';

import type { TestCardEntry } from './billing-types';
import { CardForm, groupDigits } from './card-form';

describe('CardForm', () => {
  beforeEach(() => {
    TestBed.configureTestingModule({ providers: [{ provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } }] });
  });

  function render() {
    const fixture = TestBed.createComponent(CardForm);
    fixture.componentRef.setInput('testCards', [{ number: '378282246310005', label: 'American Express', outcome: 'succeeds' }]);
    const sent: TestCardEntry[] = [];
    fixture.componentInstance.submitted.subscribe((entry) => sent.push(entry));
    fixture.detectChanges();
    return { fixture, el: fixture.nativeElement as HTMLElement, sent };
  }

  it('groups digits by four for reading', () => {
    expect(groupDigits('4242424242424242')).toBe('4242 4242 4242 4242');
    expect(groupDigits('378282246310005')).toBe('3782 8224 6310 005');
  });

  it('is labelled as test mode and lists the test cards with what they do', () => {
    const { el } = render();
    expect(el.querySelector('.test-mode')?.textContent).toContain('Test mode');
    expect(el.querySelector('.test-mode')?.textContent).toContain('never type a real card number');
    expect(el.querySelector('.test-cards')?.textContent).toContain('3782 8224 6310 005');
    expect(el.querySelector('.test-cards')?.textContent).toContain('accepted');
  });

  it('sends nothing while the number is missing or malformed', async () => {
    const { fixture, el, sent } = render();
    (el.querySelector('button.save-card') as HTMLButtonElement).click();
    const input = el.querySelector('input[formcontrolname="number"]') as HTMLInputElement;
    input.value = '42';
    input.dispatchEvent(new Event('input'));
    (el.querySelector('button.save-card') as HTMLButtonElement).click();
    await fixture.whenStable();
    expect(sent).toEqual([]);
  });

  it('sends the digits only, with the expiry as numbers', async () => {
    const { fixture, el, sent } = render();
    (el.querySelector('.use-card') as HTMLButtonElement).click();
    await fixture.whenStable();
    expect((el.querySelector('input[formcontrolname="number"]') as HTMLInputElement).value).toBe('3782 8224 6310 005');
    (el.querySelector('button.save-card') as HTMLButtonElement).click();
    expect(sent).toEqual([{ number: '378282246310005', expMonth: 12, expYear: new Date().getFullYear() + 2, cvc: '123' }]);
  });
});
