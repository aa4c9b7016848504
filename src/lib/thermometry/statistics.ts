/**
 * Small numerical helpers for the checks the engine makes: ln Γ (Lanczos, g = 7, n = 9), the
 * regularised incomplete gamma function and the χ² tail probability built on it (Numerical
 * Recipes §6.2 series and continued fraction).
 */

const LANCZOS = [
	0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313,
	-176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6,
	1.5056327351493116e-7
];

export function lnGamma(x: number): number {
	if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - lnGamma(1 - x);
	const z = x - 1;
	let s = LANCZOS[0];
	for (let i = 1; i < 9; i++) s += LANCZOS[i] / (z + i);
	const t = z + 7.5;
	return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(s);
}

/** Regularised upper incomplete gamma Q(a, x) = Γ(a, x)/Γ(a). */
export function gammaQ(a: number, x: number): number {
	if (x <= 0) return 1;
	const gln = lnGamma(a);
	if (x < a + 1) {
		let ap = a;
		let sum = 1 / a;
		let del = sum;
		for (let n = 0; n < 1000; n++) {
			ap += 1;
			del *= x / ap;
			sum += del;
			if (Math.abs(del) < Math.abs(sum) * 1e-15) break;
		}
		return 1 - sum * Math.exp(-x + a * Math.log(x) - gln);
	}
	const fpmin = 1e-300;
	let b = x + 1 - a;
	let c = 1 / fpmin;
	let d = 1 / b;
	let h = d;
	for (let i = 1; i < 1000; i++) {
		const an = -i * (i - a);
		b += 2;
		d = an * d + b;
		if (Math.abs(d) < fpmin) d = fpmin;
		c = b + an / c;
		if (Math.abs(c) < fpmin) c = fpmin;
		d = 1 / d;
		const del = d * c;
		h *= del;
		if (Math.abs(del - 1) < 1e-15) break;
	}
	return Math.exp(-x + a * Math.log(x) - gln) * h;
}

/** P(χ²_ν ≥ chi2): the probability of a χ² at least this large if the model is right. */
export function chi2Tail(chi2: number, dof: number): number {
	if (!(dof > 0)) return NaN;
	return gammaQ(dof / 2, chi2 / 2);
}
