/**
 * The response ratio C = (instrument and sample response at the anti-Stokes wavelength) /
 * (at the Stokes wavelength), with its standard uncertainty, from whichever calibration the
 * instrument profile holds (physics.md §1.2–1.3).
 */
import { C2_CM_K } from './constants';
import { cFromReference } from './temperature';
import { EngineError, type ResponseSource } from './types';

export interface ResponseFactor {
	kind: ResponseSource['kind'];
	c: number;
	u_c: number;
	/** For a reference run: the inputs that fix C, kept so the budget can list them. */
	reference?: { ratio: number; u_ratio: number; t0_k: number; u_t0_k: number };
}

/** Linear interpolation on an ascending table; refuses to extrapolate. */
function interpolate(xs: number[], ys: number[], x: number): number {
	const n = xs.length;
	if (n < 2 || x < xs[0] || x > xs[n - 1]) {
		throw new EngineError(
			'response-out-of-range',
			`The response curve covers ${xs[0]}…${xs[n - 1]} cm⁻¹ but the band sits at ${x.toFixed(1)} cm⁻¹; extend the calibration rather than extrapolate it.`
		);
	}
	let lo = 0;
	let hi = n - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (xs[mid] <= x) lo = mid;
		else hi = mid;
	}
	const f = (x - xs[lo]) / (xs[hi] - xs[lo] || 1);
	return ys[lo] + f * (ys[hi] - ys[lo]);
}

export function responseFactor(
	source: ResponseSource,
	laserCm1: number,
	modeCm1: number,
	exponent: 3 | 4
): ResponseFactor {
	if (source.kind === 'constant') {
		if (!(source.c > 0) || !(source.u_c >= 0)) {
			throw new EngineError(
				'bad-response',
				`The response ratio C must be positive with u(C) ≥ 0 (got ${source.c} ± ${source.u_c}).`
			);
		}
		return { kind: 'constant', c: source.c, u_c: source.u_c };
	}
	if (source.kind === 'curve') {
		const ras = interpolate(source.shift, source.response, -modeCm1);
		const rs = interpolate(source.shift, source.response, modeCm1);
		if (!(ras > 0) || !(rs > 0)) {
			throw new EngineError(
				'bad-response',
				'The response curve is not positive at the band positions.'
			);
		}
		const c = ras / rs;
		// The two ends are read from different parts of the curve: independent relative errors add in quadrature.
		return { kind: 'curve', c, u_c: c * Math.SQRT2 * source.u_relative };
	}
	if (!(source.ratio > 0) || !(source.t0_k > 0)) {
		throw new EngineError(
			'bad-response',
			'The reference run needs a positive ratio and a positive T₀ in kelvin.'
		);
	}
	const c = cFromReference(source.ratio, source.t0_k, laserCm1, modeCm1, exponent);
	// ln C = ln R₀ − n ln ρ + c₂ν̃m/T₀ ⇒ relative u from R₀ and T₀ (ρ is exact here).
	const x = (C2_CM_K * modeCm1) / source.t0_k;
	const rel = Math.hypot(source.u_ratio / source.ratio, (x * source.u_t0_k) / source.t0_k);
	return {
		kind: 'reference',
		c,
		u_c: c * rel,
		reference: {
			ratio: source.ratio,
			u_ratio: source.u_ratio,
			t0_k: source.t0_k,
			u_t0_k: source.u_t0_k
		}
	};
}
