import { describe, expect, it } from 'vitest';
import { C2_CM_K, laserWavenumber } from './constants';
import { estimate, type EstimateOptions } from './estimate';
import { fitBand } from './band-fit';
import { SILICON_BWH, bwhPosition } from './peak-shift';
import { createRng } from './random';
import { ratioFromTemperature } from './temperature';
import {
	expectedCounts,
	syntheticPair,
	wavelengthUniformAxis,
	type SyntheticSpec
} from './synthetic';
import { EngineError, type PreparedWindow } from './types';

/** Invented synthetic data throughout (seeded). */
const SI: SyntheticSpec = {
	laserNm: 532,
	modeCm1: 520.7,
	temperatureK: 300,
	exponent: 3,
	lineshape: 'lorentzian',
	fwhmCm1: 3.5,
	stokesCounts: 1e5,
	seed: 3
};
const OPTS: EstimateOptions = {
	laserNm: 532,
	modes: [520.7],
	exponent: 3,
	lineshape: 'lorentzian',
	response: { kind: 'constant', c: 1, u_c: 0.02 }
};
const pairOf = (spec: SyntheticSpec) => {
	const p = syntheticPair(spec);
	return [p.stokes.prepared, p.antiStokes.prepared] as const;
};

function thrownCode(f: () => unknown): string | undefined {
	try {
		f();
	} catch (e) {
		return e instanceof EngineError ? e.code : 'not-an-EngineError';
	}
	return undefined;
}

describe('estimate: refusals', () => {
	it('refuses a laser wavenumber not above the mode', () => {
		// Source: physics.md §1.1 (no Stokes band when ν̃L ≤ ν̃m) — issue 3 item 1.
		const [s, a] = pairOf(SI);
		expect(thrownCode(() => estimate(s, a, { ...OPTS, laserNm: 1e7 / 500 }))).toBe(
			'laser-below-mode'
		);
	});
	it('refuses a mode outside the windows and a mode inside the filter cut-off', () => {
		// Source: issue 3 item 1 ("no data at the band").
		const [s, a] = pairOf(SI);
		expect(thrownCode(() => estimate(s, a, { ...OPTS, modes: [1332.5] }))).toBe('no-data-at-band');
		expect(thrownCode(() => estimate(s, a, { ...OPTS, filterCutoffCm1: 600 }))).toBe(
			'no-data-at-band'
		);
		expect(thrownCode(() => estimate(s, a, { ...OPTS, modes: [] }))).toBe('no-mode');
	});
	it('withholds the temperature when the anti-Stokes band is not there, and says why', () => {
		// Source: issue 3 item 7 ("a temperature whose data cannot support it is not returned").
		const [s, a] = pairOf({
			...SI,
			temperatureK: 40,
			baseline: { level: 20, antiStokesFraction: 1 }
		});
		const r = estimate(s, a, OPTS);
		expect(r.temperature_k).toBeNull();
		expect(r.expanded_uncertainty_k).toBeNull();
		expect(r.flags.some((f) => f.severity === 'error')).toBe(true);
	});
});

describe('estimate: the joint fit', () => {
	it('approaches the shot-noise limit K·√(1/N_AS + 1/N_S) without background', () => {
		// Source: physics.md §2.3 [D] (Cramér–Rao; 1.28 K for N_S = 10⁵ at 300 K, Si, 532 nm).
		const [s, a] = pairOf(SI);
		const r = estimate(s, a, { ...OPTS, response: { kind: 'constant', c: 1, u_c: 0 } });
		const nAs =
			1e5 *
			ratioFromTemperature(300, {
				laserCm1: laserWavenumber(532),
				modeCm1: 520.7,
				exponent: 3,
				c: 1
			});
		const limit = ((300 * 300) / (C2_CM_K * 520.7)) * Math.sqrt(1 / nAs + 1 / 1e5);
		expect(limit).toBeCloseTo(1.28, 2);
		const u = r.modes[0].joint!.u_statistical_k;
		expect(u / limit).toBeGreaterThan(0.98);
		// Above the bound only by what the free baselines and shape cost (Lorentzian tails trade
		// against a baseline level over ±5 FWHM).
		expect(u / limit).toBeLessThan(1.2);
		// The separate-band method cannot beat the joint fit.
		expect(r.modes[0].separate!.u_temperature_k).toBeGreaterThanOrEqual(
			r.modes[0].joint!.u_temperature_k * 0.99
		);
	});
	it('reports the budget rows, expanded uncertainty and the dominant C', () => {
		// Source: physics.md §2.1: a 2 % C error ≈ 2.4 K for Si at 300 K; GUM U = k·u.
		const [s, a] = pairOf(SI);
		const r = estimate(s, a, OPTS);
		expect(r.method).toBe('joint-fit');
		expect(r.budget.map((b) => b.input)).toEqual([
			'ratio',
			'c_factor',
			'mode_shift',
			'laser_wavenumber'
		]);
		const c = r.budget.find((b) => b.input === 'c_factor')!;
		expect(c.contribution_k).toBeCloseTo(2.4, 1);
		expect(r.expanded_uncertainty_k).toBeCloseTo(2 * r.u_temperature_k!, 12);
		expect(r.budget.reduce((t, b) => t + b.variance_share, 0)).toBeCloseTo(1, 9);
		expect(r.flags.map((f) => f.code)).toContain('response-dominates');
		expect(Math.abs(r.temperature_k! - 300)).toBeLessThan(3 * r.modes[0].joint!.u_statistical_k);
	});
	it('finds and reports a common axis offset (laser line off zero)', () => {
		// Source: issue 3 item 3; invented offset of 3.2 cm⁻¹.
		const [s, a] = pairOf({ ...SI, axisOffsetCm1: 3.2 });
		const m = estimate(s, a, OPTS).modes[0];
		expect(Math.abs(m.axis_offset_cm1! - 3.2)).toBeLessThan(4 * m.u_axis_offset_cm1!);
		expect(Math.abs(m.shift_cm1 - 520.7)).toBeLessThan(4 * m.u_shift_cm1);
		expect(m.stokes.center_cm1).toBeCloseTo(523.9, 0);
		expect(m.anti_stokes.center_cm1).toBeCloseTo(-517.5, 0);
	});
	it('handles windows of different exposures and pixel widths (areas are band photon rates)', () => {
		// Source: physics.md §5 (normalise to counts/s; integrate with the pixel width) — invented data.
		const spec = {
			...SI,
			exposureS: { stokes: 2, antiStokes: 20 },
			window: { halfRangeCm1: 100, points: 1500 }
		};
		const [s, a] = pairOf(spec);
		const r = estimate(s, a, { ...OPTS, response: { kind: 'constant', c: 1, u_c: 0 } });
		expect(Math.abs(r.temperature_k! - 300)).toBeLessThan(3 * r.u_temperature_k!);
		expect(r.modes[0].stokes.area).toBeCloseTo(1e5 / 2, -3);
	});
	it('keeps the exponent out of a reference-run calibration', () => {
		// Source: physics.md §1.3a [D]: with a reference at T₀ the frequency factor cancels.
		const laserCm1 = laserWavenumber(532);
		const r0 = ratioFromTemperature(295, { laserCm1, modeCm1: 520.7, exponent: 3, c: 0.8 });
		const [s, a] = pairOf({ ...SI, c: 0.8, temperatureK: 450, stokesCounts: 3e5 });
		const response = {
			kind: 'reference' as const,
			ratio: r0,
			u_ratio: 0.005 * r0,
			t0_k: 295,
			u_t0_k: 0.3
		};
		const r3 = estimate(s, a, { ...OPTS, response, exponent: 3 });
		const r4 = estimate(s, a, { ...OPTS, response, exponent: 4 });
		expect(Math.abs(r3.temperature_k! - 450)).toBeLessThan(3 * r3.modes[0].joint!.u_statistical_k);
		expect(r4.temperature_k!).toBeCloseTo(r3.temperature_k!, 6);
		expect(r3.budget.map((b) => b.input)).toEqual(['ratio', 'reference_ratio', 't0', 'mode_shift']);
		const t0 = r3.budget.find((b) => b.input === 't0')!;
		expect(t0.sensitivity).toBeCloseTo((r3.temperature_k! / 295) ** 2, 9);
	});
	it('fits pseudo-Voigt bands and a curved fluorescence baseline', () => {
		// Source: issue 3 items 2–3 — invented data.
		const [s, a] = pairOf({
			...SI,
			lineshape: 'pseudo-voigt',
			eta: 0.4,
			temperatureK: 700,
			baseline: { level: 400, slope: 1e-3, curvature: 3e-6, antiStokesFraction: 0.05 },
			spikes: 4,
			darkCounts: 500,
			seed: 8
		});
		const r = estimate(s, a, {
			...OPTS,
			lineshape: 'pseudo-voigt',
			response: { kind: 'constant', c: 1, u_c: 0 }
		});
		expect(Math.abs(r.temperature_k! - 700)).toBeLessThan(3 * r.u_temperature_k!);
		expect(r.modes[0].stokes.eta!).toBeCloseTo(0.4, 1);
		expect(r.flags.map((f) => f.code)).toContain('spikes-removed');
		expect(r.flags.map((f) => f.code)).not.toContain('poor-fit');
	});
	it('flags a wrong lineshape as a poor fit', () => {
		// Source: reduced χ² test with Poisson weights — common practice.
		const [s, a] = pairOf({ ...SI, lineshape: 'lorentzian', stokesCounts: 1e6 });
		const r = estimate(s, a, { ...OPTS, lineshape: 'gaussian' });
		expect(r.flags.map((f) => f.code)).toContain('poor-fit');
	});
});

describe('estimate: separate bands, Monte Carlo, peak shift, several modes', () => {
	it('computes the separate-band method on request, with area rows in its budget', () => {
		// Source: issue 3 item 5 (band areas as budget inputs for the separate method).
		const [s, a] = pairOf(SI);
		const r = estimate(s, a, { ...OPTS, method: 'separate-bands' });
		expect(r.method).toBe('separate-bands');
		expect(r.budget.map((b) => b.input).slice(0, 2)).toEqual(['area_stokes', 'area_anti_stokes']);
		expect(Math.abs(r.temperature_k! - 300)).toBeLessThan(3 * r.u_temperature_k!);
		expect(r.modes[0].joint).toBeDefined();
	});
	it('runs a seeded Monte Carlo that agrees with the GUM result for small uncertainties', () => {
		// Source: JCGM 101:2008 vs JCGM 100:2008 for a nearly linear model.
		const [s, a] = pairOf(SI);
		const r = estimate(s, a, { ...OPTS, monteCarlo: { trials: 100_000, seed: 5 } });
		expect(r.monte_carlo!.seed).toBe(5);
		expect(Math.abs(r.monte_carlo!.sd_k / r.u_temperature_k! - 1)).toBeLessThan(0.03);
		const [lo, hi] = r.monte_carlo!.interval_95_k;
		expect(lo).toBeLessThan(r.temperature_k!);
		expect(hi).toBeGreaterThan(r.temperature_k!);
		expect((hi - lo) / 2 / r.u_temperature_k!).toBeCloseTo(1.96, 1);
	});
	it('adds the peak-shift cross-check from the Stokes position', () => {
		// Source: physics.md §4 (BWH model [M], anchored to a reference) — invented band position.
		const shift600 = bwhPosition(600, SILICON_BWH) - (bwhPosition(300, SILICON_BWH) - 520.7);
		const [s, a] = pairOf({ ...SI, modeCm1: shift600, temperatureK: 600, stokesCounts: 3e5 });
		const r = estimate(s, a, {
			...OPTS,
			peakShift: {
				kind: 'balkanski',
				parameters: SILICON_BWH,
				anchor: { shiftCm1: 520.7, uShiftCm1: 0.05, temperatureK: 300, uTemperatureK: 0.5 }
			}
		});
		const ps = r.modes[0].peak_shift!;
		expect(Math.abs(ps.temperature_k - 600)).toBeLessThan(3 * ps.u_temperature_k);
		expect(r.flags.map((f) => f.code)).not.toContain('peak-shift-disagrees');
	});
	it('combines two modes, and flags them when they disagree', () => {
		// Source: issue 3 item 6 (weighted mean, Birge ratio) — invented two-band spectrum.
		const laserNm = 532;
		const base = {
			laserNm,
			temperatureK: 500,
			exponent: 3 as const,
			lineshape: 'lorentzian' as const,
			fwhmCm1: 3,
			stokesCounts: 2e5
		};
		const make = (t2: number, seed: number): [PreparedWindow, PreparedWindow] => {
			const rng = createRng(seed);
			const w = (side: 'stokes' | 'anti-stokes'): PreparedWindow => {
				const axis =
					side === 'stokes'
						? wavelengthUniformAxis(laserNm, 300, 800, 2000)
						: wavelengthUniformAxis(laserNm, -800, -300, 2000);
				const mu1 = expectedCounts(axis, side, { ...base, modeCm1: 418 });
				const mu2 = expectedCounts(axis, side, { ...base, modeCm1: 645, temperatureK: t2 });
				const rate = new Float64Array(axis.length);
				const variance = new Float64Array(axis.length);
				for (let i = 0; i < axis.length; i++) {
					rate[i] = rng.poisson(mu1[i] + mu2[i]);
					variance[i] = Math.max(rate[i], 1);
				}
				return {
					side,
					source: side,
					shift: axis,
					rate,
					variance,
					usable: new Uint8Array(axis.length).fill(1),
					exposureS: 1,
					spikesRemoved: 0,
					saturatedPoints: 0
				};
			};
			return [w('stokes'), w('anti-stokes')];
		};
		const opts = {
			...OPTS,
			modes: [418, 645],
			response: { kind: 'constant' as const, c: 1, u_c: 0.01 }
		};
		const [s, a] = make(500, 1);
		const r = estimate(s, a, opts);
		expect(r.modes).toHaveLength(2);
		expect(r.birge_ratio).toBeDefined();
		expect(Math.abs(r.temperature_k! - 500)).toBeLessThan(3 * r.u_temperature_k!);
		expect(r.flags.map((f) => f.code)).not.toContain('modes-disagree');
		// The shared C keeps u(T̄) from shrinking below the C contribution of the better mode.
		const [s2, a2] = make(560, 2);
		const r2 = estimate(s2, a2, { ...opts, response: { kind: 'constant', c: 1, u_c: 0 } });
		expect(r2.flags.map((f) => f.code)).toContain('modes-disagree');
		expect(r2.birge_ratio!).toBeGreaterThan(3);
	});
});

describe('band fit', () => {
	it('returns the area with a standard error that matches its scatter', () => {
		// Source: Poisson statistics of a band area (common practice) — invented data.
		const areas: number[] = [];
		const us: number[] = [];
		for (let k = 0; k < 150; k++) {
			const p = syntheticPair({ ...SI, seed: 400 + k, baseline: { level: 30 } });
			const f = fitBand(p.stokes.prepared, { lineshape: 'lorentzian', expectedCentre: 520.7 });
			areas.push(f.band.area);
			us.push(f.band.u_area);
		}
		const mean = areas.reduce((x, y) => x + y, 0) / areas.length;
		const sd = Math.sqrt(areas.reduce((x, y) => x + (y - mean) ** 2, 0) / (areas.length - 1));
		const u = us.reduce((x, y) => x + y, 0) / us.length;
		expect(Math.abs(mean - 1e5)).toBeLessThan(3 * (u / Math.sqrt(areas.length)));
		expect(Math.abs(sd / u - 1)).toBeLessThan(0.2);
	});
});
