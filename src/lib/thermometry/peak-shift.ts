/**
 * Peak-shift thermometry: the Stokes band moves down as the lattice warms, so its position is a
 * second, independent thermometer for the anti-Stokes/Stokes ratio. It is sensitive to strain
 * (physics.md §4), so it is a cross-check, never the reported temperature.
 *
 * Silicon: the anharmonic model of Balkanski, Wallis & Haro, Phys. Rev. B 28, 1928 (1983),
 *   ω(T) = ω₀ + C[1 + 2/(eˣ − 1)] + D[1 + 3/(eʸ − 1) + 3/(eʸ − 1)²],  x = c₂ω₀/2T, y = c₂ω₀/3T,
 * with the parameters physics.md marks [M] (from memory). Its 300 K position sits ≈1 cm⁻¹ above
 * today's calibrated 520.7 cm⁻¹, so the curve is anchored to a reference measurement: only its
 * shape is used. Any other material: a linear coefficient the user gives.
 */
import { C2_CM_K } from './constants';

export interface BalkanskiParameters {
	omega0: number;
	c: number;
	d: number;
	/** FWHM terms (optional; only the position is used for thermometry). */
	a?: number;
	b?: number;
}

/** Si parameters as listed in physics.md §4 — marked [M]: from memory, not confirmed. */
export const SILICON_BWH: BalkanskiParameters = {
	omega0: 528,
	c: -2.96,
	d: -0.174,
	a: 1.295,
	b: 0.105
};

export type PeakShiftModel =
	| {
			kind: 'balkanski';
			parameters: BalkanskiParameters;
			/** The band position measured at a known temperature: fixes the curve's offset. */
			anchor?: { shiftCm1: number; uShiftCm1: number; temperatureK: number; uTemperatureK: number };
	  }
	| {
			kind: 'linear';
			/** Position at the reference temperature, cm⁻¹, and dω/dT in cm⁻¹/K (negative). */
			referenceShiftCm1: number;
			uReferenceShiftCm1: number;
			referenceTemperatureK: number;
			slopeCm1PerK: number;
			uSlopeCm1PerK: number;
	  };

function bose(z: number): number {
	return 1 / Math.expm1(z);
}

/** Band position ω(T) of the Balkanski–Wallis–Haro model, cm⁻¹. */
export function bwhPosition(t: number, p: BalkanskiParameters): number {
	if (t <= 0) return p.omega0 + p.c + p.d;
	const n3 = bose((C2_CM_K * p.omega0) / (2 * t));
	const n4 = bose((C2_CM_K * p.omega0) / (3 * t));
	return p.omega0 + p.c * (1 + 2 * n3) + p.d * (1 + 3 * n4 + 3 * n4 * n4);
}

/** Band FWHM Γ(T) of the same model, cm⁻¹. */
export function bwhWidth(t: number, p: BalkanskiParameters): number {
	const a = p.a ?? 0;
	const b = p.b ?? 0;
	if (t <= 0) return a + b;
	const n3 = bose((C2_CM_K * p.omega0) / (2 * t));
	const n4 = bose((C2_CM_K * p.omega0) / (3 * t));
	return a * (1 + 2 * n3) + b * (1 + 3 * n4 + 3 * n4 * n4);
}

/** dω/dT by a central difference (the model is smooth; 10 mK steps are ample). */
export function bwhSlope(t: number, p: BalkanskiParameters): number {
	const h = 0.01;
	return (bwhPosition(t + h, p) - bwhPosition(t - h, p)) / (2 * h);
}

export interface PeakShiftResult {
	temperature_k: number;
	u_temperature_k: number;
	/** dω/dT at the result, cm⁻¹/K. */
	slope_cm1_per_k: number;
	model: string;
	anchored: boolean;
}

/** Temperature from the fitted Stokes band position (axis offset already removed). */
export function peakShiftTemperature(
	shiftCm1: number,
	uShiftCm1: number,
	model: PeakShiftModel
): PeakShiftResult {
	if (model.kind === 'linear') {
		const dt = (shiftCm1 - model.referenceShiftCm1) / model.slopeCm1PerK;
		const t = model.referenceTemperatureK + dt;
		const u =
			Math.hypot(uShiftCm1, model.uReferenceShiftCm1, dt * model.uSlopeCm1PerK) /
			Math.abs(model.slopeCm1PerK);
		return {
			temperature_k: t,
			u_temperature_k: u,
			slope_cm1_per_k: model.slopeCm1PerK,
			model: 'linear',
			anchored: true
		};
	}
	const p = model.parameters;
	const a = model.anchor;
	const offset = a ? a.shiftCm1 - bwhPosition(a.temperatureK, p) : 0;
	const target = shiftCm1 - offset;
	// ω(T) falls monotonically: bisect on 1…3000 K.
	let lo = 1;
	let hi = 3000;
	for (let k = 0; k < 80; k++) {
		const mid = (lo + hi) / 2;
		if (bwhPosition(mid, p) > target) lo = mid;
		else hi = mid;
	}
	const t = (lo + hi) / 2;
	const slope = bwhSlope(t, p);
	// The anchor's own uncertainty moves the offset: u(offset)² = u(ω_a)² + (dω/dT|_a · u(T_a))².
	const uOffset = a ? Math.hypot(a.uShiftCm1, bwhSlope(a.temperatureK, p) * a.uTemperatureK) : 0;
	return {
		temperature_k: t,
		u_temperature_k: Math.hypot(uShiftCm1, uOffset) / Math.abs(slope),
		slope_cm1_per_k: slope,
		model: 'Balkanski–Wallis–Haro 1983',
		anchored: a !== undefined
	};
}
