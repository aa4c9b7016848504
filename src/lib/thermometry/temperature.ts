/**
 * From an anti-Stokes/Stokes area ratio to a temperature, and back (physics.md §1.1):
 *
 *   R = C · ρⁿ · exp(−c₂ν̃m/T),   ρ = (ν̃L + ν̃m)/(ν̃L − ν̃m)   ⇒   T = c₂ν̃m / (n ln ρ + ln C − ln R)
 *
 * and the reference-temperature form (§1.3a), where a pair measured at a known T₀ fixes C and the
 * frequency factor cancels:  1/T = 1/T₀ − ln(R/R₀)/(c₂ν̃m).
 */
import { C2_CM_K } from './constants';
import { EngineError } from './types';

export interface RatioModel {
	/** Absolute vacuum laser wavenumber ν̃L, cm⁻¹. */
	laserCm1: number;
	/** Raman shift of the mode ν̃m, cm⁻¹ (positive). */
	modeCm1: number;
	/** 3 for photon counting, 4 for energy-proportional detection. */
	exponent: 3 | 4;
	/** Response ratio C (anti-Stokes over Stokes). */
	c: number;
}

/** Frequency ratio ρ of the anti-Stokes to the Stokes scattered light. */
export function rho(laserCm1: number, modeCm1: number): number {
	if (!(laserCm1 > modeCm1)) {
		throw new EngineError(
			'laser-below-mode',
			`The laser wavenumber ${laserCm1.toFixed(1)} cm⁻¹ is not above the mode at ${modeCm1} cm⁻¹, so there is no Stokes band.`
		);
	}
	return (laserCm1 + modeCm1) / (laserCm1 - modeCm1);
}

/** The ratio R the model predicts at temperature T. */
export function ratioFromTemperature(t: number, m: RatioModel): number {
	return (
		m.c * Math.pow(rho(m.laserCm1, m.modeCm1), m.exponent) * Math.exp((-C2_CM_K * m.modeCm1) / t)
	);
}

/**
 * Temperature from a ratio; NaN when the ratio is not physical (R ≤ 0, or R at or above the
 * infinite-temperature limit C·ρⁿ, where the denominator would be ≤ 0).
 */
export function temperatureFromRatio(r: number, m: RatioModel): number {
	if (!(r > 0) || !(m.c > 0)) return NaN;
	const d = m.exponent * Math.log(rho(m.laserCm1, m.modeCm1)) + Math.log(m.c) - Math.log(r);
	return d > 0 ? (C2_CM_K * m.modeCm1) / d : NaN;
}

/** Reference form: T from R, given the ratio R₀ measured at T₀ with the same laser and mode. */
export function temperatureFromReference(
	r: number,
	r0: number,
	t0: number,
	modeCm1: number
): number {
	if (!(r > 0) || !(r0 > 0) || !(t0 > 0)) return NaN;
	const inv = 1 / t0 - Math.log(r / r0) / (C2_CM_K * modeCm1);
	return inv > 0 ? 1 / inv : NaN;
}

/** C fixed by a reference pair: C = R₀ ρ⁻ⁿ exp(c₂ν̃m/T₀). */
export function cFromReference(
	r0: number,
	t0: number,
	laserCm1: number,
	modeCm1: number,
	exponent: 3 | 4
): number {
	return r0 * Math.pow(rho(laserCm1, modeCm1), -exponent) * Math.exp((C2_CM_K * modeCm1) / t0);
}

/** K ≡ T²/(c₂ν̃m): kelvin per unit relative error of R or C. */
export function kelvinPerRelative(t: number, modeCm1: number): number {
	return (t * t) / (C2_CM_K * modeCm1);
}

export interface Sensitivities {
	/** ∂T/∂R, ∂T/∂C, ∂T/∂ν̃m, ∂T/∂ν̃L (physics.md §2.1). */
	ratio: number;
	c: number;
	mode: number;
	laser: number;
	k: number;
}

/** Sensitivity coefficients of the direct form at the solution (T, R). */
export function sensitivities(t: number, r: number, m: RatioModel): Sensitivities {
	const k = kelvinPerRelative(t, m.modeCm1);
	const l2m2 = m.laserCm1 * m.laserCm1 - m.modeCm1 * m.modeCm1;
	return {
		ratio: k / r,
		c: -k / m.c,
		mode: t / m.modeCm1 - (k * 2 * m.exponent * m.laserCm1) / l2m2,
		laser: (k * 2 * m.exponent * m.modeCm1) / l2m2,
		k
	};
}

export interface ReferenceSensitivities {
	/** ∂T/∂R, ∂T/∂R₀, ∂T/∂T₀, ∂T/∂ν̃m of the reference form; ν̃L drops out. */
	ratio: number;
	r0: number;
	t0: number;
	mode: number;
	k: number;
}

export function referenceSensitivities(
	t: number,
	r: number,
	r0: number,
	t0: number,
	modeCm1: number
): ReferenceSensitivities {
	const k = kelvinPerRelative(t, modeCm1);
	return {
		ratio: k / r,
		r0: -k / r0,
		t0: (t / t0) ** 2,
		// 1/T = 1/T₀ − L/(c₂ν̃m) with L fixed ⇒ ∂T/∂ν̃m = T(1 − T/T₀)/ν̃m
		mode: (t * (1 - t / t0)) / modeCm1,
		k
	};
}
