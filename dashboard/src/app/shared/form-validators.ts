import { AbstractControl, ValidationErrors, ValidatorFn, Validators } from '@angular/forms';

import { PASSWORD_MAX, PASSWORD_MIN } from '../core/api-types';

/** The password rule of the contract (10–200 characters), as field validators. */
export const passwordValidators: ValidatorFn[] = [
  Validators.required,
  Validators.minLength(PASSWORD_MIN),
  Validators.maxLength(PASSWORD_MAX),
];

/**
 * An e-mail check stricter than Angular's `Validators.email` (which accepts `a@b`): something, an
 * @, a domain with a dot, no spaces. The server has the last word.
 */
export const emailValidators: ValidatorFn[] = [
  Validators.required,
  Validators.maxLength(254),
  Validators.pattern(/^[^\s@]+@[^\s@]+\.[^\s@]+$/),
];

/** Group validator: `confirm` must equal `password` (error `mismatch` on the group). */
export function matchingPasswords(password = 'password', confirm = 'confirm'): ValidatorFn {
  return (group: AbstractControl): ValidationErrors | null => {
    const a = group.get(password)?.value;
    const b = group.get(confirm)?.value;
    return b && a !== b ? { mismatch: true } : null;
  };
}

/** The message under a password field. */
export function passwordMessage(control: AbstractControl | null): string {
  if (!control?.errors) return '';
  if (control.errors['required']) return 'Enter a password.';
  if (control.errors['minlength']) return `Use at least ${PASSWORD_MIN} characters.`;
  if (control.errors['maxlength']) return `Use at most ${PASSWORD_MAX} characters.`;
  if (control.errors['server']) return control.errors['server'] as string;
  return 'This password cannot be used.';
}

/** The message under an e-mail field. */
export function emailMessage(control: AbstractControl | null): string {
  if (!control?.errors) return '';
  if (control.errors['required']) return 'Enter your e-mail address.';
  if (control.errors['server']) return control.errors['server'] as string;
  return 'Enter an address such as name@institute.edu.';
}

/** Puts the `invalid-request` messages of a problem under the matching form fields. */
export function applyServerErrors(form: AbstractControl, errors: Record<string, string>): void {
  for (const [field, message] of Object.entries(errors)) {
    const control = form.get(field);
    if (control) {
      control.setErrors({ ...(control.errors ?? {}), server: message });
      control.markAsTouched();
    }
  }
}
