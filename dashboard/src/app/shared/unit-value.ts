import { Pipe, PipeTransform } from '@angular/core';

const SUPERSCRIPT: Record<string, string> = {
  '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻',
};

/** An integer written in superscript digits (for 10ⁿ). */
export function superscript(n: number): string {
  return String(n).split('').map((c) => SUPERSCRIPT[c] ?? c).join('');
}

/**
 * A number in plain or scientific notation with `digits` significant digits: 2.657×10²², 1.571,
 * 0.0005746 → 5.746×10⁻⁴. Null and non-finite values become an em dash.
 */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e-2 && abs < 1e4) return String(Number(value.toPrecision(digits)));
  const [mantissa, exponent] = value.toExponential(digits - 1).split('e');
  return `${mantissa}×10${superscript(Number(exponent))}`;
}

/** Formats a CGS value with its unit: `{{ 2.6568e22 | unitValue: 'erg/cm³' }}` → 2.657×10²² erg/cm³. */
@Pipe({ name: 'unitValue' })
export class UnitValuePipe implements PipeTransform {
  transform(value: number | null | undefined, unit = '', digits = 4): string {
    const text = formatNumber(value, digits);
    return unit && text !== '—' ? `${text} ${unit}` : text;
  }
}
