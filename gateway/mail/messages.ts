/**
 * Every mail Fermiwell sends, one function each: data in, rendered mail out. To add one (quota
 * warnings, invoices, …): write a function here that returns render({...}) and call
 * `mailer.send(to, yourMail(...))` from the service that decides to send it.
 */
import { render, type RenderedMail } from './layout.js';

const plural = (n: number, unit: string) => `${n} ${unit}${n === 1 ? '' : 's'}`;
const describeDuration = (ms: number) => (ms >= 48 * 3_600_000 ? plural(Math.round(ms / 86_400_000), 'day') : plural(Math.round(ms / 3_600_000), 'hour'));

export function verificationMail(input: { displayName: string; link: string; validForMs: number }): RenderedMail {
  return render({
    subject: 'Confirm your e-mail address for Fermiwell',
    preview: 'One click and your Fermiwell account is ready.',
    heading: `Welcome, ${input.displayName}`,
    paragraphs: ['Please confirm that this address is yours. Once it is confirmed you can sign in, set up an organisation and create API keys.'],
    action: { label: 'Confirm my address', url: input.link },
    after: [`The link works once and for ${describeDuration(input.validForMs)}. If it has run out, ask for a new one on the sign-in page.`],
    reason: 'You received this because someone signed up for Fermiwell with this address. If it was not you, ignore this mail: no account is activated without the link.',
  });
}

export function alreadyRegisteredMail(input: { displayName: string; signInLink: string; resetLink: string }): RenderedMail {
  return render({
    subject: 'Someone tried to sign up with your Fermiwell address',
    preview: 'You already have an account.',
    heading: `Hello ${input.displayName}`,
    paragraphs: [
      'Someone just asked to create a Fermiwell account with this address, but you already have one. Nothing was changed.',
      'If it was you, sign in instead. If you no longer know your password, choose a new one.',
    ],
    action: { label: 'Sign in', url: input.signInLink },
    after: [`Forgotten password: ${input.resetLink}`],
    reason: 'You received this because of a sign-up attempt with this address. If it was not you, no action is needed.',
  });
}

export function passwordResetMail(input: { displayName: string; link: string; validForMs: number }): RenderedMail {
  return render({
    subject: 'Choose a new Fermiwell password',
    preview: 'A link to set a new password.',
    heading: 'A new password for your account',
    paragraphs: [`Hello ${input.displayName}, a new password was requested for your Fermiwell account. Use the button to choose one; it also signs you out everywhere else.`],
    action: { label: 'Choose a new password', url: input.link },
    after: [`The link works once and for ${describeDuration(input.validForMs)}. Your current password keeps working until you set a new one.`],
    reason: 'You received this because a password reset was requested for this address. If it was not you, ignore this mail; your password stays as it is.',
  });
}

export function invitationMail(input: { organisationName: string; inviterName: string; role: string; link: string; expiresAt: Date }): RenderedMail {
  return render({
    subject: `${input.inviterName} invited you to ${input.organisationName} on Fermiwell`,
    preview: `Join ${input.organisationName} as ${input.role}.`,
    heading: `Join ${input.organisationName}`,
    paragraphs: [
      `${input.inviterName} invited you to the organisation ${input.organisationName} on Fermiwell, with the role ${input.role}.`,
      'Fermiwell serves the equation of state of hot, ionized matter to simulation codes. If you have no account yet, you can create one on the way.',
    ],
    action: { label: 'Accept the invitation', url: input.link },
    after: [`The invitation is valid until ${input.expiresAt.toUTCString()}.`],
    reason: 'You received this because a member of that organisation entered this address. If you do not expect it, ignore this mail.',
  });
}
