/**
 * The uncertainty budget of JCGM 100:2008 (GUM): the law of propagation of uncertainty,
 *   u_c²(T) = Σ cᵢ² u²(xᵢ) + 2 Σ_{i<j} cᵢ cⱼ r(xᵢ,xⱼ) u(xᵢ) u(xⱼ)   (GUM eq. 13/16),
 * one row per input with its sensitivity coefficient cᵢ = ∂T/∂xᵢ, contribution |cᵢ|u(xᵢ) and share.
 */
import type { BudgetRow } from './types';

export type BudgetInput = Omit<BudgetRow, 'contribution_k' | 'variance_share'>;

export interface Correlation {
	/** `input` keys of the two correlated rows. */
	a: string;
	b: string;
	/** Correlation coefficient r(xa, xb), −1…1. */
	r: number;
}

export interface Budget {
	rows: BudgetRow[];
	/** Combined standard uncertainty u_c(T), K. */
	u_c: number;
	/** The covariance terms' part of u_c², K² (zero without correlations). */
	covariance_k2: number;
}

export function combine(inputs: BudgetInput[], correlations: Correlation[] = []): Budget {
	const terms = inputs.map((r) => r.sensitivity * r.standard_uncertainty);
	let variance = 0;
	for (const t of terms) variance += t * t;
	let cov = 0;
	for (const c of correlations) {
		const i = inputs.findIndex((r) => r.input === c.a);
		const j = inputs.findIndex((r) => r.input === c.b);
		if (i >= 0 && j >= 0 && i !== j) cov += 2 * c.r * terms[i] * terms[j];
	}
	const total = Math.max(variance + cov, 0);
	const rows = inputs.map((r, i) => ({
		...r,
		contribution_k: Math.abs(terms[i]),
		// Shares of u_c²; with correlations they need not add up to 1 (the rest is covariance_k2).
		variance_share: total > 0 ? (terms[i] * terms[i]) / total : 0
	}));
	return { rows, u_c: Math.sqrt(total), covariance_k2: cov };
}

/** Expanded uncertainty U = k·u_c (k = 2 gives ≈95 % for a normal output). */
export function expanded(u: number, k = 2): number {
	return k * u;
}
