import { roundToUncertainty } from '$lib/thermometry/format';

/** `x ± u` GUM-rounded, or x to a few significant digits when u is zero or unknown. */
export function withU(x: number, u: number | null | undefined, unit = ''): string {
	const tail = unit && unit !== '1' ? ` ${unit}` : '';
	if (u == null || !(u > 0)) return `${sig(x)}${tail}`;
	const r = roundToUncertainty(x, u);
	return `${r.value} ± ${r.uncertainty}${tail}`;
}

/** A number to `digits` significant digits without exponent noise for everyday magnitudes. */
export function sig(x: number, digits = 5): string {
	if (!Number.isFinite(x)) return String(x);
	if (x === 0) return '0';
	const a = Math.abs(x);
	if (a >= 1e-3 && a < 1e7) return String(Number(x.toPrecision(digits)));
	const [mantissa, exp] = x.toExponential(digits - 1).split('e');
	return `${Number(mantissa)} × 10${superscript(Number(exp))}`;
}

const SUP = '⁰¹²³⁴⁵⁶⁷⁸⁹';
const superscript = (n: number) =>
	(n < 0 ? '⁻' : '') + [...String(Math.abs(n))].map((d) => SUP[Number(d)]).join('');

export const percent = (share: number) => `${(share * 100).toFixed(share >= 0.1 ? 1 : 2)} %`;

export const dateTime = new Intl.DateTimeFormat('en-GB', {
	dateStyle: 'medium',
	timeStyle: 'medium'
});

/** x alone, rounded to the decimal place its u gives (two significant digits of u). */
export function valueAt(x: number, u: number): string {
	return u > 0 ? roundToUncertainty(x, u).value : sig(x, 6);
}
