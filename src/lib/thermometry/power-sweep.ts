/**
 * Laser heating: the probe laser warms the spot it measures. Readings at several powers are fitted
 * with a weighted straight line T(P) = T₀ + K·P (weights 1/u²); the intercept is the temperature
 * at zero power and the slope the heating in K/mW (physics.md §5). The χ² of the line tests
 * linearity, which holds only for small heating.
 */
import { makeFlag } from './flags';
import { chi2Tail } from './statistics';
import type { Flag } from './types';

export interface SweepPoint {
	power_mw: number;
	temperature_k: number;
	/**
	 * Standard uncertainty of each reading that is INDEPENDENT between powers (counting
	 * statistics). A calibration error common to all readings moves the line as a whole; pass it
	 * as `uCommonK`.
	 */
	u_temperature_k: number;
}

export interface PowerSweepResult {
	t0_k: number;
	u_t0_k: number;
	slope_k_per_mw: number;
	u_slope_k_per_mw: number;
	/** cov(T₀, K), K²/mW. */
	covariance: number;
	chi2: number;
	dof: number;
	p_value: number;
	flags: Flag[];
}

export function powerSweep(
	points: SweepPoint[],
	opts: { uCommonK?: number } = {}
): PowerSweepResult {
	if (points.length < 2) throw new Error('A power sweep needs at least two readings.');
	let s = 0;
	let sx = 0;
	let sy = 0;
	let sxx = 0;
	let sxy = 0;
	for (const p of points) {
		const w = 1 / (p.u_temperature_k * p.u_temperature_k);
		s += w;
		sx += w * p.power_mw;
		sy += w * p.temperature_k;
		sxx += w * p.power_mw * p.power_mw;
		sxy += w * p.power_mw * p.temperature_k;
	}
	const det = s * sxx - sx * sx;
	const slope = (s * sxy - sx * sy) / det;
	const t0 = (sxx * sy - sx * sxy) / det;
	let chi2 = 0;
	for (const p of points)
		chi2 += ((p.temperature_k - t0 - slope * p.power_mw) / p.u_temperature_k) ** 2;
	const dof = points.length - 2;
	const pValue = dof > 0 ? chi2Tail(chi2, dof) : NaN;
	const uSlope = Math.sqrt(s / det);
	const flags: Flag[] = [];
	if (dof > 0 && pValue < 0.01) {
		flags.push(
			makeFlag('power-sweep-nonlinear', `χ² = ${chi2.toFixed(1)} for ${dof} degrees of freedom.`)
		);
	}
	if (Math.abs(slope) > 3 * uSlope) {
		flags.push(makeFlag('laser-heating', `${slope.toFixed(3)} ± ${uSlope.toFixed(3)} K/mW.`));
	}
	return {
		t0_k: t0,
		u_t0_k: Math.hypot(Math.sqrt(sxx / det), opts.uCommonK ?? 0),
		slope_k_per_mw: slope,
		u_slope_k_per_mw: uSlope,
		covariance: -sx / det,
		chi2,
		dof,
		p_value: pValue,
		flags
	};
}
