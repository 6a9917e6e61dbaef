import { HttpErrorResponse, provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Type } from '@angular/core';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { Router, provideRouter } from '@angular/router';

import { AuthSession } from '../core/auth-session';
import { TEST_USER, fakeSession } from '../shared/testing';
import { ResetPasswordPage } from './reset-password-page';
import { SignInPage } from './sign-in-page';
import { SignUpPage } from './sign-up-page';

/** Types into an input the way a person does (value + input event). */
function type(root: HTMLElement, selector: string, value: string): void {
  const input = root.querySelector(selector) as HTMLInputElement;
  input.value = value;
  input.dispatchEvent(new Event('input'));
  input.dispatchEvent(new Event('blur'));
}

function submit(root: HTMLElement): void {
  (root.querySelector('button[type="submit"]') as HTMLButtonElement).click();
}

const errorsOf = (root: HTMLElement) => Array.from(root.querySelectorAll('mat-error, .fw-field-error')).map((e) => e.textContent?.trim());

describe('sign-in family forms', () => {
  let backend: HttpTestingController;
  let session: ReturnType<typeof fakeSession>;

  beforeEach(() => {
    session = fakeSession();
    session.fake.user.set(null);
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
        { provide: AuthSession, useValue: session.fake },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
  });

  afterEach(() => backend.verify());

  async function render<T>(component: Type<T>): Promise<{ fixture: ComponentFixture<T>; root: HTMLElement }> {
    const fixture = TestBed.createComponent(component);
    await fixture.whenStable();
    return { fixture, root: fixture.nativeElement as HTMLElement };
  }

  describe('SignUpPage', () => {
    it('checks e-mail format, password length and the repeated password before sending anything', async () => {
      const { fixture, root } = await render(SignUpPage);
      type(root, 'input[formcontrolname="displayName"]', 'Dana');
      type(root, 'input[formcontrolname="email"]', 'dana@institute');
      type(root, 'input[formcontrolname="password"]', 'short');
      type(root, 'input[formcontrolname="confirm"]', 'different');
      submit(root);
      await fixture.whenStable();
      const errors = errorsOf(root);
      expect(errors).toContain('Enter an address such as name@institute.edu.');
      expect(errors).toContain('Use at least 10 characters.');
      expect(errors).toContain('The two passwords differ.');
      backend.expectNone('/v1/auth/sign-up');
    });

    it('sends a valid form and then asks the person to check their inbox', async () => {
      const { fixture, root } = await render(SignUpPage);
      type(root, 'input[formcontrolname="displayName"]', 'Dana Postdoc');
      type(root, 'input[formcontrolname="email"]', 'dana@institute.example');
      type(root, 'input[formcontrolname="password"]', 'degenerate electrons');
      type(root, 'input[formcontrolname="confirm"]', 'degenerate electrons');
      submit(root);
      const request = backend.expectOne('/v1/auth/sign-up');
      expect(request.request.body).toEqual({ displayName: 'Dana Postdoc', email: 'dana@institute.example', password: 'degenerate electrons' });
      request.flush({ status: 'verification-sent' }, { status: 202, statusText: 'Accepted' });
      await vi.waitFor(() => expect(root.textContent).toContain('Check your inbox'));
      expect(root.textContent).toContain('dana@institute.example');
    });

    it('puts validation messages from the server under their fields', async () => {
      const { fixture, root } = await render(SignUpPage);
      type(root, 'input[formcontrolname="displayName"]', 'Dana');
      type(root, 'input[formcontrolname="email"]', 'dana@institute.example');
      type(root, 'input[formcontrolname="password"]', 'degenerate electrons');
      type(root, 'input[formcontrolname="confirm"]', 'degenerate electrons');
      submit(root);
      backend.expectOne('/v1/auth/sign-up').flush(
        {
          type: '/problems/invalid-request',
          title: 'Invalid request',
          status: 400,
          detail: 'password: Too common.',
          errors: [{ field: 'password', message: 'Too common.' }],
        },
        { status: 400, statusText: 'Bad Request' },
      );
      await vi.waitFor(() => expect(errorsOf(root)).toContain('Too common.'));
      await fixture.whenStable();
      expect(root.querySelector('.fw-form-error')?.textContent).toContain('password: Too common.');
    });
  });

  describe('SignInPage', () => {
    it('requires a well-formed e-mail and a password', async () => {
      const { fixture, root } = await render(SignInPage);
      submit(root);
      await fixture.whenStable();
      expect(errorsOf(root)).toEqual(['Enter your e-mail address.', 'Enter your password.']);
      backend.expectNone('/v1/auth/session');
    });

    it('shows one neutral message for wrong credentials', async () => {
      // Sign-in goes through the session; make it fail like the API does.
      const signIn = vi.fn().mockRejectedValue(
        new HttpErrorResponse({
          status: 401,
          error: { type: '/problems/invalid-credentials', title: 'Sign-in failed', status: 401, detail: 'E-mail or password is wrong.' },
        }),
      );
      (session.fake as unknown as { signIn: typeof signIn }).signIn = signIn;
      const { fixture, root } = await render(SignInPage);
      type(root, 'input[formcontrolname="email"]', 'dana@institute.example');
      type(root, 'input[formcontrolname="password"]', 'not the password');
      submit(root);
      await vi.waitFor(() => expect(root.querySelector('.fw-form-error')?.textContent).toContain('That e-mail and password do not match.'));
      expect(signIn).toHaveBeenCalledWith('dana@institute.example', 'not the password');
    });

    it('goes to the create-organisation step when the person has no organisation', async () => {
      session.fake.organisations.set([]);
      (session.fake as unknown as { signIn: () => Promise<void> }).signIn = vi.fn().mockResolvedValue(undefined);
      const navigate = vi.spyOn(TestBed.inject(Router), 'navigate').mockResolvedValue(true);
      const { root } = await render(SignInPage);
      type(root, 'input[formcontrolname="email"]', 'dana@institute.example');
      type(root, 'input[formcontrolname="password"]', 'degenerate electrons');
      submit(root);
      await vi.waitFor(() => expect(navigate).toHaveBeenCalledWith(['/new-organisation']));
    });

    it('takes a platform operator without an organisation to the Operator page, not the create-organisation step', async () => {
      session.fake.organisations.set([]);
      (session.fake as unknown as { signIn: () => Promise<void> }).signIn = vi.fn().mockImplementation(async () =>
        session.fake.user.set({ ...TEST_USER, platformRole: 'operator' }),
      );
      const router = TestBed.inject(Router);
      const navigate = vi.spyOn(router, 'navigate').mockResolvedValue(true);
      const navigateByUrl = vi.spyOn(router, 'navigateByUrl').mockResolvedValue(true);
      const { root } = await render(SignInPage);
      type(root, 'input[formcontrolname="email"]', 'operator@platform.example');
      type(root, 'input[formcontrolname="password"]', 'operator password');
      submit(root);
      await vi.waitFor(() => expect(navigateByUrl).toHaveBeenCalledWith('/operator'));
      expect(navigate).not.toHaveBeenCalledWith(['/new-organisation']);
    });
  });

  describe('ResetPasswordPage', () => {
    it('says the link is incomplete without a token in the fragment', async () => {
      const { root } = await render(ResetPasswordPage);
      expect(root.textContent).toContain('This link is incomplete.');
    });

    it('checks the new password and its repetition, then posts the token from the fragment', async () => {
      await TestBed.inject(Router).navigateByUrl('/#token=reset-token-123');
      const { fixture, root } = await render(ResetPasswordPage);
      type(root, 'input[formcontrolname="password"]', 'tiny');
      submit(root);
      await fixture.whenStable();
      expect(errorsOf(root)).toContain('Use at least 10 characters.');
      expect(errorsOf(root)).toContain('Repeat the new password.');

      type(root, 'input[formcontrolname="password"]', 'a much longer passphrase');
      type(root, 'input[formcontrolname="confirm"]', 'a much longer passphrase!');
      submit(root);
      await fixture.whenStable();
      expect(errorsOf(root)).toContain('The two passwords differ.');
      backend.expectNone('/v1/auth/password/reset');

      type(root, 'input[formcontrolname="confirm"]', 'a much longer passphrase');
      submit(root);
      const request = backend.expectOne('/v1/auth/password/reset');
      expect(request.request.body).toEqual({ token: 'reset-token-123', password: 'a much longer passphrase' });
      request.flush(null, { status: 204, statusText: 'No Content' });
      await vi.waitFor(() => expect(root.textContent).toContain('Your password is changed'));
    });
  });
});
