/**
 * How a temperature is written for a person (design.md "Look and feel"): the expanded
 * uncertainty to at most two significant digits and the value rounded to the same decimal place
 * (JCGM 100:2008 §7.2.6), with k, and °C beside the kelvin value.
 */

export interface RoundedPair {
	value: string;
	uncertainty: string;
	/** Decimal places used (negative: rounded to tens, hundreds, …). */
	decimals: number;
}

function fixed(x: number, decimals: number): string {
	if (decimals >= 0) return x.toFixed(decimals);
	const step = 10 ** -decimals;
	return String(Math.round(x / step) * step);
}

/** Round u to two significant digits and x to the same decimal place (JCGM 100 §7.2.6). */
export function roundToUncertainty(x: number, u: number, digits = 2): RoundedPair {
	if (!(u > 0) || !Number.isFinite(u)) {
		return { value: String(x), uncertainty: String(u), decimals: 0 };
	}
	let decimals = digits - 1 - Math.floor(Math.log10(u));
	// Rounding may carry into a new digit (9.96 → 10.0): then one decimal fewer keeps two digits.
	if (Math.abs(Number(fixed(u, decimals))) >= 10 ** (digits - decimals)) decimals--;
	return { value: fixed(x, decimals), uncertainty: fixed(u, decimals), decimals };
}

/** Celsius from kelvin (the 0 °C point is 273.15 K exactly, SI definition). */
export const kelvinToCelsius = (t: number) => t - 273.15;

/** `412.3 K ± 2.1 K (k = 2)  (139.2 °C ± 2.1 °C)` */
export function formatTemperature(tK: number, expandedK: number, k: number): string {
	const K = roundToUncertainty(tK, expandedK);
	const C = roundToUncertainty(kelvinToCelsius(tK), expandedK);
	return `${K.value} K ± ${K.uncertainty} K (k = ${k})  (${C.value} °C ± ${C.uncertainty} °C)`;
}
