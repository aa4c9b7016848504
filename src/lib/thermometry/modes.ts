/**
 * Several modes in one measurement: one temperature per mode, combined into a weighted mean by
 * generalised least squares. Inputs shared by the modes (the same constant C, the same laser, the
 * same reference thermometer) make their errors correlated; ignoring that would shrink u(T̄)
 * wrongly, so the covariance V between the mode temperatures is built from their budgets:
 *   T̄ = aᵀT,  a = V⁻¹1/(1ᵀV⁻¹1),  u²(T̄) = 1/(1ᵀV⁻¹1),  Birge ratio R_B = √(rᵀV⁻¹r/(N−1)).
 * When R_B > 1 the modes scatter more than their uncertainties allow; u(T̄) is then scaled by R_B
 * (Birge 1932; the PDG "scale factor" practice) and a flag is raised.
 */
import { spdInverse } from './levenberg-marquardt';
import { chi2Tail } from './statistics';
import type { BudgetRow } from './types';

export interface ModeTemperature {
	modeCm1: number;
	temperatureK: number;
	budget: BudgetRow[];
}

export interface WeightedMean {
	temperatureK: number;
	uTemperatureK: number;
	/** Weights a of each mode (sum 1). */
	weights: number[];
	birgeRatio: number;
	chi2: number;
	/** P(χ² ≥ observed) for N − 1 degrees of freedom. */
	pValue: number;
	/** u before the Birge scaling. */
	uInternalK: number;
	budget: BudgetRow[];
}

/**
 * Weighted mean of mode temperatures. Rows whose `input` is listed in `shared` are one and the
 * same input for every mode (fully correlated); all other rows are independent between modes.
 */
export function weightedMean(modes: ModeTemperature[], shared: string[]): WeightedMean {
	const n = modes.length;
	const term = (m: ModeTemperature, key: string) => {
		const r = m.budget.find((b) => b.input === key);
		return r ? r.sensitivity * r.standard_uncertainty : 0;
	};
	const v = new Float64Array(n * n);
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < n; j++) {
			if (i === j) {
				let s = 0;
				for (const r of modes[i].budget) s += (r.sensitivity * r.standard_uncertainty) ** 2;
				v[i * n + i] = s;
			} else {
				let s = 0;
				for (const key of shared) s += term(modes[i], key) * term(modes[j], key);
				v[i * n + j] = s;
			}
		}
	}
	// A whisker of independent variance keeps V invertible when a shared term dominates.
	for (let i = 0; i < n; i++) v[i * n + i] *= 1 + 1e-9;
	let inv = spdInverse(v, n);
	if (!inv) {
		inv = new Float64Array(n * n);
		for (let i = 0; i < n; i++) inv[i * n + i] = 1 / v[i * n + i];
	}
	const w = new Array<number>(n).fill(0);
	let total = 0;
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < n; j++) w[i] += inv[i * n + j];
		total += w[i];
	}
	const a = w.map((x) => x / total);
	const mean = a.reduce((s, ai, i) => s + ai * modes[i].temperatureK, 0);
	const uInt = Math.sqrt(1 / total);
	let chi2 = 0;
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < n; j++) {
			chi2 += (modes[i].temperatureK - mean) * inv[i * n + j] * (modes[j].temperatureK - mean);
		}
	}
	const birge = n > 1 ? Math.sqrt(chi2 / (n - 1)) : 1;
	const scale = Math.max(birge, 1);

	// Budget of the mean: T̄ = Σ aᵢ Tᵢ, so each independent row keeps its mode tag, shared rows merge.
	const rows: BudgetRow[] = [];
	for (const key of shared) {
		const first = modes.map((m) => m.budget.find((b) => b.input === key)).find(Boolean);
		if (!first) continue;
		const sens = modes.reduce((s, m, i) => {
			const r = m.budget.find((b) => b.input === key);
			return s + (r ? a[i] * r.sensitivity : 0);
		}, 0);
		rows.push({
			...first,
			sensitivity: sens,
			contribution_k: Math.abs(sens * first.standard_uncertainty),
			variance_share: 0
		});
	}
	modes.forEach((m, i) => {
		for (const r of m.budget) {
			if (shared.includes(r.input)) continue;
			const sens = a[i] * r.sensitivity;
			rows.push({
				...r,
				input: `${r.input}@${m.modeCm1}`,
				label: `${r.label} (${m.modeCm1} cm⁻¹)`,
				sensitivity: sens,
				contribution_k: Math.abs(sens * r.standard_uncertainty),
				variance_share: 0
			});
		}
	});
	const u2 = uInt * uInt;
	for (const r of rows) r.variance_share = u2 > 0 ? r.contribution_k ** 2 / u2 : 0;
	return {
		temperatureK: mean,
		uTemperatureK: uInt * scale,
		weights: a,
		birgeRatio: birge,
		chi2,
		pValue: n > 1 ? chi2Tail(chi2, n - 1) : 1,
		uInternalK: uInt,
		budget: rows
	};
}
