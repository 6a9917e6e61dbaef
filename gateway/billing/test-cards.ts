/**
 * Test-mode card entry: the payment provider's published test card numbers (Stripe's testing
 * documentation, "Test card numbers"; common practice in every Stripe integration) mapped to the
 * provider's test tokens, which the local fake and Stripe's test mode both accept. The number is
 * looked up and dropped at once: it is never stored, logged or sent anywhere. Real cards are never
 * entered through Fermiwell: with a live key, card entry by number is refused.
 */

export interface TestCard {
  number: string;
  token: string;
  label: string;
  /** What happens with this card, shown next to it in test mode. */
  outcome: 'succeeds' | 'declined' | 'charge-fails';
}

export const TEST_CARDS: readonly TestCard[] = [
  { number: '4242424242424242', token: 'tok_visa', label: 'Visa', outcome: 'succeeds' },
  { number: '5555555555554444', token: 'tok_mastercard', label: 'Mastercard', outcome: 'succeeds' },
  { number: '378282246310005', token: 'tok_amex', label: 'American Express', outcome: 'succeeds' },
  { number: '4000000000000002', token: 'tok_chargeDeclined', label: 'Visa, declined', outcome: 'declined' },
  { number: '4000000000009995', token: 'tok_chargeDeclinedInsufficientFunds', label: 'Visa, insufficient funds', outcome: 'declined' },
  { number: '4000000000000069', token: 'tok_chargeDeclinedExpiredCard', label: 'Visa, expired card', outcome: 'declined' },
  { number: '4000000000000341', token: 'tok_chargeCustomerFail', label: 'Visa, accepted then every charge fails', outcome: 'charge-fails' },
];

/** Digits only: spaces and dashes people type between groups are ignored. */
export function normaliseCardNumber(input: string): string {
  return input.replace(/[\s-]/g, '');
}

export function testCardFor(input: string): TestCard | undefined {
  const digits = normaliseCardNumber(input);
  return TEST_CARDS.find((c) => c.number === digits);
}
