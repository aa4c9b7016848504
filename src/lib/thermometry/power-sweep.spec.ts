import { describe, expect, it } from 'vitest';
import { powerSweep } from './power-sweep';

/*
 * Hand computation of a weighted straight-line fit T = a + b·P with weights w = 1/u², by the
 * standard weighted least-squares formulas (common practice; e.g. the straight-line fit of any
 * data-analysis text):
 *   Δ = Σw·Σwx² − (Σwx)²
 *   b = (Σw·Σwxy − Σwx·Σwy)/Δ        u(b) = √(Σw/Δ)
 *   a = (Σwx²·Σwy − Σwx·Σwxy)/Δ      u(a) = √(Σwx²/Δ)      cov(a, b) = −Σwx/Δ
 *   χ² = Σ ((y − a − b·x)/u)²,  ν = n − 2; for ν = 2 the χ² tail is exactly exp(−χ²/2).
 *
 * Points (P mW, T K, u K): (1, 302, 1), (2, 306, 2), (3, 308, 1), (4, 311, 2); w = 1, ¼, 1, ¼.
 *   Σw   = 1 + 0.25 + 1 + 0.25                          = 2.5
 *   Σwx  = 1 + 0.5 + 3 + 1                              = 5.5
 *   Σwy  = 302 + 76.5 + 308 + 77.75                     = 764.25
 *   Σwx² = 1 + 1 + 9 + 4                                = 15
 *   Σwxy = 302 + 153 + 924 + 311                        = 1690
 *   Δ    = 2.5·15 − 5.5²                                = 7.25
 *   b    = (2.5·1690 − 5.5·764.25)/7.25 = 21.625/7.25   = 173/58  ≈ 2.98276 K/mW
 *   a    = (15·764.25 − 5.5·1690)/7.25 = 2168.75/7.25  = 8675/29 ≈ 299.13793 K
 *   u(b) = √(2.5/7.25) ≈ 0.58722,  u(a) = √(15/7.25) ≈ 1.43839,  cov = −5.5/7.25
 *   (T − a − bP)/u = −7/58, 26/58, −5/58, −2/58 → χ² = (49 + 676 + 25 + 4)/58² = 13/58 ≈ 0.22414
 */
const POINTS = [
	{ power_mw: 1, temperature_k: 302, u_temperature_k: 1 },
	{ power_mw: 2, temperature_k: 306, u_temperature_k: 2 },
	{ power_mw: 3, temperature_k: 308, u_temperature_k: 1 },
	{ power_mw: 4, temperature_k: 311, u_temperature_k: 2 }
];

const close = (actual: number, expected: number) =>
	expect(Math.abs(actual - expected)).toBeLessThan(1e-9 * Math.max(1, Math.abs(expected)));

describe('power sweep against a hand-computed weighted regression', () => {
	const fit = powerSweep(POINTS);

	it('gives the intercept (zero-power T) and slope of the hand computation', () => {
		close(fit.t0_k, 2168.75 / 7.25);
		close(fit.slope_k_per_mw, 21.625 / 7.25);
	});

	it('gives their standard uncertainties and covariance', () => {
		close(fit.u_t0_k, Math.sqrt(15 / 7.25));
		close(fit.u_slope_k_per_mw, Math.sqrt(2.5 / 7.25));
		close(fit.covariance, -5.5 / 7.25);
	});

	it('gives χ², the degrees of freedom and the exact two-dof tail probability', () => {
		close(fit.chi2, 13 / 58);
		expect(fit.dof).toBe(2);
		close(fit.p_value, Math.exp(-13 / 116));
		// Linear within the uncertainties, and a slope of five standard uncertainties: heating.
		expect(fit.flags.map((f) => f.code)).toEqual(['laser-heating']);
	});

	it('adds a shared calibration uncertainty to the intercept in quadrature only', () => {
		const shared = powerSweep(POINTS, { uCommonK: 2 });
		close(shared.u_t0_k, Math.sqrt(15 / 7.25 + 4));
		close(shared.u_slope_k_per_mw, Math.sqrt(2.5 / 7.25));
	});
});
