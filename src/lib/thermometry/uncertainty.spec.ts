import { describe, expect, it } from 'vitest';
import { combine } from './budget';
import { C2_CM_K, laserWavenumber } from './constants';
import { weightedMean } from './modes';
import { propagate } from './monte-carlo';
import { bwhPosition, bwhSlope, bwhWidth, peakShiftTemperature, SILICON_BWH } from './peak-shift';
import { powerSweep } from './power-sweep';
import { createRng } from './random';
import { responseFactor } from './response';
import { chi2Tail, lnGamma } from './statistics';
import { ratioFromTemperature, temperatureFromRatio } from './temperature';
import { EngineError, type BudgetRow } from './types';

const row = (input: string, sensitivity: number, u: number, value = 1): BudgetRow => ({
	input,
	label: input,
	unit: '1',
	value,
	standard_uncertainty: u,
	sensitivity,
	contribution_k: Math.abs(sensitivity * u),
	variance_share: 0
});

describe('GUM budget (JCGM 100:2008)', () => {
	it('adds independent contributions in quadrature and reports shares', () => {
		// Source: GUM eq. 10 — common practice.
		const b = combine([
			{
				input: 'ratio',
				label: 'R',
				unit: '1',
				value: 0.1,
				standard_uncertainty: 0.001,
				sensitivity: 1200
			},
			{
				input: 'c_factor',
				label: 'C',
				unit: '1',
				value: 1,
				standard_uncertainty: 0.02,
				sensitivity: -120
			}
		]);
		expect(b.u_c).toBeCloseTo(Math.hypot(1.2, 2.4), 12);
		expect(b.rows[1].variance_share).toBeCloseTo(2.4 ** 2 / (1.2 ** 2 + 2.4 ** 2), 12);
		expect(b.rows[0].contribution_k).toBeCloseTo(1.2, 12);
	});
	it('includes the covariance term 2·cᵢcⱼ·r·uᵢuⱼ', () => {
		// Source: GUM eq. 16 — common practice.
		const inputs = [
			{ input: 'a', label: 'a', unit: '1', value: 1, standard_uncertainty: 1, sensitivity: 1 },
			{ input: 'b', label: 'b', unit: '1', value: 1, standard_uncertainty: 1, sensitivity: 1 }
		];
		expect(combine(inputs, [{ a: 'a', b: 'b', r: 1 }]).u_c).toBeCloseTo(2, 12);
		expect(combine(inputs, [{ a: 'a', b: 'b', r: -1 }]).u_c).toBeCloseTo(0, 6);
	});
});

describe('Monte Carlo propagation (JCGM 101:2008)', () => {
	it('reproduces the physics.md §2.2 demo and agrees with the GUM linear result', () => {
		// Source: physics.md §2.2 [D]: Si, 532 nm, 300 K, N_S = 10⁵, N_AS ≈ 9.7·10³ (Poisson),
		// C = 1 ± 2 % (Gaussian), M = 10⁶ ⇒ mean 300.04 K, s.d. 2.72 K, 95 % [294.8, 305.5] K; GUM 2.72 K.
		const laserCm1 = laserWavenumber(532);
		const m = { laserCm1, modeCm1: 520.7, exponent: 3 as const, c: 1 };
		const lamAs = 1e5 * ratioFromTemperature(300, m);
		expect(lamAs).toBeGreaterThan(9.6e3);
		expect(lamAs).toBeLessThan(9.8e3);
		const mc = propagate(
			[
				{ kind: 'poisson', mean: 1e5 },
				{ kind: 'poisson', mean: lamAs },
				{ kind: 'normal', mean: 1, sd: 0.02 }
			],
			(x) => temperatureFromRatio(x[1] / x[0], { ...m, c: x[2] }),
			1_000_000,
			2026
		);
		const k = (300 * 300) / (C2_CM_K * 520.7);
		const gum = k * Math.sqrt(1 / lamAs + 1 / 1e5 + 0.02 ** 2);
		expect(gum).toBeCloseTo(2.72, 2);
		expect(mc.mean_k).toBeCloseTo(300.04, 1);
		expect(mc.sd_k).toBeCloseTo(2.72, 1);
		expect(Math.abs(mc.sd_k - gum) / gum).toBeLessThan(0.01);
		expect(mc.interval_95_k[0]).toBeCloseTo(294.8, 0);
		expect(mc.interval_95_k[1]).toBeCloseTo(305.5, 0);
		expect(mc.histogram.counts.reduce((a, b) => a + b, 0)).toBeGreaterThan(0.99 * 1e6);
	});
	it('gives the shortest interval of a normal as mean ± 1.96 σ', () => {
		// Source: JCGM 101 §7.7; normal quantile 1.959964 — common practice.
		const mc = propagate([{ kind: 'normal', mean: 10, sd: 2 }], (x) => x[0], 400_000, 7);
		expect(mc.interval_95_k[0]).toBeCloseTo(10 - 1.96 * 2, 1);
		expect(mc.interval_95_k[1]).toBeCloseTo(10 + 1.96 * 2, 1);
	});
	it('is repeatable for a given seed', () => {
		// Source: common practice (seeded PRNG, mulberry32).
		const run = () =>
			propagate([{ kind: 'rectangular', mean: 0, halfWidth: 1 }], (x) => x[0], 1000, 42);
		expect(run().mean_k).toBe(run().mean_k);
	});
});

describe('random numbers', () => {
	it('draws Poisson counts with mean and variance λ, small and large', () => {
		// Source: Poisson distribution (mean = variance = λ) — common practice.
		const rng = createRng(11);
		for (const lam of [3, 40, 2500, 1e6]) {
			let s = 0;
			let s2 = 0;
			const n = 100_000;
			for (let i = 0; i < n; i++) {
				const k = rng.poisson(lam);
				s += k;
				s2 += k * k;
			}
			const mean = s / n;
			const v = s2 / n - mean * mean;
			expect(Math.abs(mean - lam)).toBeLessThan(5 * Math.sqrt(lam / n));
			expect(Math.abs(v / lam - 1)).toBeLessThan(0.03);
		}
	});
	it('has ln Γ and χ² tails right', () => {
		// Source: Γ(n) = (n−1)!; χ²₂ tail = e^(−x/2); χ²₁(3.841) ≈ 0.05 — common practice.
		expect(lnGamma(10)).toBeCloseTo(Math.log(362880), 10);
		expect(lnGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 10);
		expect(chi2Tail(3, 2)).toBeCloseTo(Math.exp(-1.5), 10);
		expect(chi2Tail(3.841458820694124, 1)).toBeCloseTo(0.05, 8);
		expect(chi2Tail(124.342, 100)).toBeCloseTo(0.05, 3);
	});
});

describe('several modes', () => {
	it('gives the inverse-variance weighted mean and the Birge ratio of independent modes', () => {
		// Source: hand calculation (common practice): T = 300, 304, 296 K, u = 2, 2, 4 K ⇒
		// mean 301.333 K, u = 1.3333 K, χ² = 4.0, R_B = √2.
		const modes = [
			{ modeCm1: 1, temperatureK: 300, budget: [row('ratio', 1, 2)] },
			{ modeCm1: 2, temperatureK: 304, budget: [row('ratio', 1, 2)] },
			{ modeCm1: 3, temperatureK: 296, budget: [row('ratio', 1, 4)] }
		];
		const wm = weightedMean(modes, []);
		expect(wm.temperatureK).toBeCloseTo(301.3333333, 6);
		expect(wm.uInternalK).toBeCloseTo(1.3333333, 6);
		expect(wm.chi2).toBeCloseTo(4, 6);
		expect(wm.birgeRatio).toBeCloseTo(Math.SQRT2, 6);
		expect(wm.uTemperatureK).toBeCloseTo(1.3333333 * Math.SQRT2, 5);
		expect(wm.pValue).toBeCloseTo(Math.exp(-2), 8);
	});
	it('does not average away an error the modes share (a common C)', () => {
		// Source: GUM §5.2 (correlated inputs) — hand calculation: two modes, 1 K independent each,
		// 2 K from the same C ⇒ u(T̄)² = 1/2 + 4.
		const modes = [
			{ modeCm1: 1, temperatureK: 300, budget: [row('ratio', 1, 1), row('c_factor', -100, 0.02)] },
			{ modeCm1: 2, temperatureK: 300, budget: [row('ratio', 1, 1), row('c_factor', -100, 0.02)] }
		];
		expect(weightedMean(modes, ['c_factor']).uTemperatureK).toBeCloseTo(Math.sqrt(4.5), 6);
		expect(weightedMean(modes, []).uTemperatureK).toBeCloseTo(Math.sqrt(2.5), 6);
	});
});

describe('power sweep', () => {
	it('matches a hand-computed weighted regression', () => {
		// Source: weighted least squares solved independently (NumPy normal equations, invented data):
		// T₀ = 300.10112 ± 1.42214 K, K = 5.15730 ± 0.67040 K/mW, cov = −0.853933, χ² = 1.044944.
		const r = powerSweep([
			{ power_mw: 1, temperature_k: 305, u_temperature_k: 1 },
			{ power_mw: 2, temperature_k: 311, u_temperature_k: 1 },
			{ power_mw: 3, temperature_k: 314, u_temperature_k: 2 },
			{ power_mw: 4, temperature_k: 321, u_temperature_k: 2 }
		]);
		expect(r.t0_k).toBeCloseTo(300.1011236, 6);
		expect(r.u_t0_k).toBeCloseTo(1.42213639, 6);
		expect(r.slope_k_per_mw).toBeCloseTo(5.15730337, 6);
		expect(r.u_slope_k_per_mw).toBeCloseTo(0.67040152, 6);
		expect(r.covariance).toBeCloseTo(-0.85393258, 6);
		expect(r.chi2).toBeCloseTo(1.04494382, 6);
		expect(r.flags.map((f) => f.code)).toEqual(['laser-heating']);
	});
	it('flags a sweep that is not linear', () => {
		// Source: χ² test of the straight line — common practice (invented data).
		const r = powerSweep(
			[0, 1, 2, 3, 4].map((p) => ({
				power_mw: p,
				temperature_k: 300 + 2 * p * p,
				u_temperature_k: 0.5
			}))
		);
		expect(r.flags.map((f) => f.code)).toContain('power-sweep-nonlinear');
	});
});

describe('peak-shift thermometry', () => {
	it('reproduces the physics.md §4 values of the Balkanski–Wallis–Haro model for Si', () => {
		// Source: physics.md §4 [D] table computed from the [M] parameters.
		expect(bwhPosition(0, SILICON_BWH)).toBeCloseTo(524.87, 2);
		expect(bwhPosition(100, SILICON_BWH)).toBeCloseTo(524.68, 2);
		expect(bwhPosition(300, SILICON_BWH)).toBeCloseTo(521.85, 2);
		expect(bwhPosition(600, SILICON_BWH)).toBeCloseTo(515.28, 2);
		expect(bwhPosition(1173, SILICON_BWH)).toBeCloseTo(498.2, 1);
		expect(bwhWidth(0, SILICON_BWH)).toBeCloseTo(1.4, 2);
		expect(bwhWidth(300, SILICON_BWH)).toBeCloseTo(2.83, 2);
		expect(bwhSlope(300, SILICON_BWH)).toBeCloseTo(-0.0185, 4);
	});
	it('inverts the anchored model and propagates the position uncertainty', () => {
		// Source: physics.md §4 (anchor the offset to a reference) — invented anchor values.
		const anchor = { shiftCm1: 520.7, uShiftCm1: 0, temperatureK: 300, uTemperatureK: 0 };
		const target = bwhPosition(600, SILICON_BWH) - (bwhPosition(300, SILICON_BWH) - 520.7);
		const r = peakShiftTemperature(target, 0.1, {
			kind: 'balkanski',
			parameters: SILICON_BWH,
			anchor
		});
		expect(r.temperature_k).toBeCloseTo(600, 6);
		expect(r.u_temperature_k).toBeCloseTo(0.1 / Math.abs(bwhSlope(600, SILICON_BWH)), 6);
		const lin = peakShiftTemperature(519.7, 0.05, {
			kind: 'linear',
			referenceShiftCm1: 520.7,
			uReferenceShiftCm1: 0,
			referenceTemperatureK: 300,
			slopeCm1PerK: -0.02,
			uSlopeCm1PerK: 0
		});
		expect(lin.temperature_k).toBeCloseTo(350, 9);
		expect(lin.u_temperature_k).toBeCloseTo(2.5, 9);
	});
});

describe('response ratio C', () => {
	it('takes C from a response curve as R(−ν̃m)/R(+ν̃m) with both ends’ uncertainties', () => {
		// Source: physics.md §1.2 (C is the AS/S response ratio) — invented curve.
		const src = {
			kind: 'curve' as const,
			shift: [-600, -400, 400, 600],
			response: [0.8, 0.9, 1.0, 1.1],
			u_relative: 0.01
		};
		const r = responseFactor(src, laserWavenumber(532), 500, 3);
		expect(r.c).toBeCloseTo(0.85 / 1.05, 12);
		expect(r.u_c / r.c).toBeCloseTo(0.01 * Math.SQRT2, 12);
		expect(() => responseFactor(src, laserWavenumber(532), 700, 3)).toThrow(EngineError);
	});
	it('takes C from a reference run with the relative uncertainty of R₀ and T₀', () => {
		// Source: physics.md §1.3a [D]: C = R₀ρ⁻ⁿ exp(c₂ν̃m/T₀).
		const laserCm1 = laserWavenumber(532);
		const r0 = ratioFromTemperature(296, { laserCm1, modeCm1: 520.7, exponent: 3, c: 0.9 });
		const r = responseFactor(
			{ kind: 'reference', ratio: r0, u_ratio: 0.01 * r0, t0_k: 296, u_t0_k: 0.5 },
			laserCm1,
			520.7,
			3
		);
		expect(r.c).toBeCloseTo(0.9, 12);
		const x = (C2_CM_K * 520.7) / 296;
		expect(r.u_c / r.c).toBeCloseTo(Math.hypot(0.01, (x * 0.5) / 296), 12);
	});
});
