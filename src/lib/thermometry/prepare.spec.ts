import { describe, expect, it } from 'vitest';
import type { ShiftWindow } from './axis';
import { parseSpectrum } from './parse';
import { findSaturation, prepareWindow } from './prepare';
import { EngineError, type Side } from './types';

/** mulberry32: a small seeded generator, enough for test noise. */
function rng(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}
/** Poisson draw: Knuth below 30, rounded normal approximation above (enough for these tests). */
function poisson(lambda: number, u: () => number): number {
	if (lambda < 30) {
		const l = Math.exp(-lambda);
		let k = 0;
		let p = 1;
		do {
			k++;
			p *= u();
		} while (p > l);
		return k - 1;
	}
	const z = Math.sqrt(-2 * Math.log(u() + 1e-300)) * Math.cos(2 * Math.PI * u());
	return Math.max(0, Math.round(lambda + Math.sqrt(lambda) * z));
}

interface BandSpec {
	shape: 'lorentzian' | 'gaussian';
	center: number;
	fwhm: number;
	height: number;
}
function band(x: number, b: BandSpec): number {
	const d = (x - b.center) / b.fwhm;
	return b.shape === 'lorentzian'
		? b.height / (1 + 4 * d * d)
		: b.height * Math.exp(-4 * Math.LN2 * d * d);
}

/** A raw-count window with step 1 cm⁻¹ around a band, optionally noisy. */
function makeWindow(opts: {
	side?: Side;
	n?: number;
	start?: number;
	bands?: BandSpec[];
	background?: (x: number) => number;
	seed?: number;
	scale?: number;
}): ShiftWindow {
	const n = opts.n ?? 400;
	const start = opts.start ?? 320;
	const u = opts.seed === undefined ? null : rng(opts.seed);
	const shift = new Float64Array(n);
	const counts = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		const x = start + i;
		shift[i] = x;
		let mu = opts.background ? opts.background(x) : 100;
		for (const b of opts.bands ?? []) mu += band(x, b);
		mu *= opts.scale ?? 1;
		counts[i] = u ? poisson(mu, u) : mu;
	}
	return {
		side: opts.side ?? 'stokes',
		source: 'test.csv',
		shift,
		counts,
		fileX: Float64Array.from(shift),
		rows: Int32Array.from({ length: n }, (_, i) => i + 1),
		unit: 'raman-shift'
	};
}

const si = { modes: [520.7], exposureS: 1 };

describe('dark subtraction and exposure normalisation', () => {
	it('a constant dark is subtracted and the rate is counts per second', () => {
		const w = makeWindow({ bands: [{ shape: 'lorentzian', center: 520.7, fwhm: 4, height: 900 }] });
		const r = prepareWindow(w, { ...si, exposureS: 2, dark: { kind: 'constant', counts: 100 } });
		// Background 100 counts minus dark 100 → 0; band top 900+~100 → (1000−100)/2 s (exact arithmetic).
		expect(r.window.rate[0]).toBeCloseTo((w.counts[0] - 100) / 2, 9);
		expect(r.window.exposureS).toBe(2);
		const top = w.shift.findIndex((s) => s === 521);
		expect(r.window.rate[top]).toBeCloseTo((w.counts[top] - 100) / 2, 9);
		// Poisson variance of the raw counts over t² (physics.md §2.3: counting statistics).
		expect(r.window.variance[top]).toBeCloseTo(w.counts[top] / 4, 9);
	});

	it('two windows with different exposures give the same rate', () => {
		const bands = [{ shape: 'lorentzian' as const, center: 520.7, fwhm: 4, height: 500 }];
		const a = prepareWindow(makeWindow({ bands }), { ...si, exposureS: 1 });
		const b = prepareWindow(makeWindow({ bands, scale: 4 }), { ...si, exposureS: 4 });
		for (let i = 0; i < a.window.rate.length; i += 37) {
			expect(b.window.rate[i]).toBeCloseTo(a.window.rate[i], 9);
			// Four times the counts: the relative error halves, so the rate variance is a quarter.
			expect(b.window.variance[i]).toBeCloseTo(a.window.variance[i] / 4, 9);
		}
	});

	it('a dark file on the same axis is interpolated and its own variance added', () => {
		const w = makeWindow({});
		// A linear dark sampled on a coarser grid: interpolation is exact for a straight line.
		const lines = Array.from(
			{ length: 60 },
			(_, i) => `${300 + i * 8},${20 + 0.1 * (300 + i * 8)}`
		);
		const dark = parseSpectrum({ name: 'dark.csv', text: lines.join('\n') });
		const r = prepareWindow(w, { ...si, dark: { kind: 'spectrum', spectrum: dark } });
		for (let i = 0; i < w.shift.length; i += 50) {
			const d = 20 + 0.1 * w.shift[i];
			expect(r.window.rate[i]).toBeCloseTo(100 - d, 9);
			expect(r.window.variance[i]).toBeCloseTo(100 + d, 9);
		}
	});

	it('a dark with a different exposure is scaled to the window', () => {
		const w = makeWindow({});
		const lines = Array.from({ length: 60 }, (_, i) => `${300 + i * 8},10`);
		const dark = parseSpectrum({ name: 'dark.csv', text: lines.join('\n') });
		const r = prepareWindow(w, {
			...si,
			exposureS: 2,
			dark: { kind: 'spectrum', spectrum: dark, exposureS: 1 }
		});
		expect(r.window.rate[10]).toBeCloseTo((100 - 20) / 2, 9);
	});

	it('refuses a dark that does not span the window', () => {
		const lines = Array.from({ length: 30 }, (_, i) => `${600 + i},10`);
		const dark = parseSpectrum({ name: 'short-dark.csv', text: lines.join('\n') });
		try {
			prepareWindow(makeWindow({}), { ...si, dark: { kind: 'spectrum', spectrum: dark } });
			throw new Error('expected a refusal');
		} catch (e) {
			expect((e as EngineError).code).toBe('dark-axis-mismatch');
			expect((e as EngineError).message).toContain('short-dark.csv');
		}
	});
});

describe('cosmic-ray spikes', () => {
	const cases: BandSpec[] = [
		{ shape: 'lorentzian', center: 520.7, fwhm: 3, height: 20000 },
		{ shape: 'gaussian', center: 520.2, fwhm: 3, height: 20000 },
		{ shape: 'lorentzian', center: 520.5, fwhm: 6, height: 2000 },
		{ shape: 'gaussian', center: 521, fwhm: 4, height: 300 }
	];

	it('finds and counts 1–3-point spikes without eating the band', () => {
		for (const [k, b] of cases.entries()) {
			for (let seed = 1; seed <= 10; seed++) {
				const w = makeWindow({ bands: [b], seed: seed * 31 + k });
				// Five spikes of one, two and three points (a cosmic ray hits one or a few pixels).
				const hits: [number, number, number][] = [
					[30, 1, 3000],
					[95, 2, 1500],
					[160, 3, 800],
					[260, 1, 400],
					[350, 2, 5000]
				];
				for (const [at, width, h] of hits) for (let j = 0; j < width; j++) w.counts[at + j] += h;
				const r = prepareWindow(w, si);
				expect(r.window.spikesRemoved).toBe(5);
				expect(r.spikes.map((s) => s.index)).toEqual(hits.map((h) => h[0]));
				// Every point within ±10 cm⁻¹ of the band stays usable.
				for (let i = 0; i < w.shift.length; i++) {
					if (Math.abs(w.shift[i] - b.center) <= 10) expect(r.window.usable[i]).toBe(1);
				}
				expect(r.flags.some((f) => f.code === 'spikes-removed')).toBe(true);
			}
		}
	});

	it('finds no spike in clean noisy data', () => {
		for (const [k, b] of cases.entries()) {
			for (let seed = 1; seed <= 20; seed++) {
				const r = prepareWindow(makeWindow({ bands: [b], seed: 1000 + seed * 7 + k }), si);
				expect(r.window.spikesRemoved).toBe(0);
			}
		}
	});

	it('an undersampled band (FWHM 1.5 points) at the mode is not taken for a spike', () => {
		for (let seed = 1; seed <= 10; seed++) {
			for (const shape of ['lorentzian', 'gaussian'] as const) {
				const w = makeWindow({
					bands: [{ shape, center: 521, fwhm: 1.5, height: 20000 }],
					seed: 500 + seed
				});
				const r = prepareWindow(w, si);
				expect(r.window.spikesRemoved).toBe(0);
			}
		}
	});

	it('a spike sitting on the band flank is found too', () => {
		const w = makeWindow({
			bands: [{ shape: 'lorentzian', center: 520.7, fwhm: 8, height: 5000 }],
			seed: 5
		});
		const at = w.shift.findIndex((s) => s === 530);
		w.counts[at] += 4000;
		const r = prepareWindow(w, si);
		expect(r.window.spikesRemoved).toBe(1);
		expect(r.window.usable[at]).toBe(0);
	});
});

describe('saturation', () => {
	const clipped = () => {
		const w = makeWindow({
			bands: [{ shape: 'lorentzian', center: 520.7, fwhm: 5, height: 90000 }],
			seed: 3
		});
		for (let i = 0; i < w.counts.length; i++) w.counts[i] = Math.min(w.counts[i], 65535);
		return w;
	};

	it('a flat top at an ADC full scale is found without being told the ceiling', () => {
		expect(findSaturation(clipped().counts)).toBe(65535);
	});

	it('three equal points at the maximum are a flat top', () => {
		const c = Float64Array.from({ length: 50 }, (_, i) => 100 + i);
		c[20] = c[21] = c[22] = 5000;
		expect(findSaturation(c)).toBe(5000);
	});

	it('one band-top point that happens to equal 2ᵏ − 1 is data, not a ceiling', () => {
		// Seen in a seeded round trip: a Poisson band top drew exactly 16,383 = 2¹⁴ − 1 counts.
		const c = Float64Array.from({ length: 50 }, (_, i) => 14000 + 20 * i);
		c[30] = 16383;
		expect(findSaturation(c)).toBeNull();
		c[31] = 16383;
		expect(findSaturation(c)).toBe(16383);
	});

	it('at a few hundred counts three chance ties are not a flat top; four are', () => {
		const c = Float64Array.from({ length: 50 }, (_, i) => 400 + i);
		c[20] = c[21] = c[22] = 637;
		expect(findSaturation(c)).toBeNull();
		c[23] = 637;
		expect(findSaturation(c)).toBe(637);
	});

	it('a clipped band is refused', () => {
		try {
			prepareWindow(clipped(), si);
			throw new Error('expected a refusal');
		} catch (e) {
			expect(e).toBeInstanceOf(EngineError);
			expect((e as EngineError).code).toBe('saturated-band');
			expect((e as EngineError).message).toContain('test.csv');
		}
	});

	it('when allowed, clipped points are masked and flagged, never fitted silently', () => {
		const r = prepareWindow(clipped(), { ...si, allowSaturatedBand: true });
		expect(r.window.saturatedPoints).toBeGreaterThan(0);
		const masked = Array.from(r.window.usable).filter((u) => u === 0).length;
		expect(masked).toBe(r.window.saturatedPoints);
		const f = r.flags.find((x) => x.code === 'saturation');
		expect(f?.severity).toBe('warning');
	});

	it('saturation away from the band is masked with an info flag', () => {
		const w = makeWindow({
			seed: 9,
			bands: [{ shape: 'lorentzian', center: 520.7, fwhm: 4, height: 800 }]
		});
		for (let i = 5; i < 9; i++) w.counts[i] = 4095;
		const r = prepareWindow(w, si);
		expect(r.window.saturatedPoints).toBe(4);
		expect(r.flags.find((x) => x.code === 'saturation')?.severity).toBe('info');
	});
});

describe('fluorescence baseline', () => {
	const fluorescence = (x: number) => 200 + 2 * (x - 320) + 0.004 * (x - 320) ** 2;
	const b = { shape: 'lorentzian' as const, center: 520.7, fwhm: 4, height: 3000 };

	for (const kind of ['polynomial', 'als'] as const) {
		it(`${kind}: removes a curved background away from the band and keeps the band`, () => {
			const w = makeWindow({ bands: [b], background: fluorescence, seed: 11 });
			const r = prepareWindow(w, { ...si, baseline: { kind } });
			expect(r.baseline).toBeDefined();
			// Away from the band the remainder is noise around zero: check a mean over 100 points.
			let s = 0;
			for (let i = 0; i < 100; i++) s += r.window.rate[i];
			const sd = Math.sqrt(fluorescence(370) / 100);
			expect(Math.abs(s / 100)).toBeLessThan(5 * sd);
			// The band top keeps its height above the old background within a few per cent.
			const top = w.shift.findIndex((x) => x === 521);
			expect(r.window.rate[top] / band(521, b)).toBeGreaterThan(0.95);
			expect(r.window.rate[top] / band(521, b)).toBeLessThan(1.05);
			// Variance only grows: the baseline's own uncertainty is added.
			for (let i = 0; i < w.shift.length; i += 40) {
				expect(r.window.variance[i]).toBeGreaterThanOrEqual(Math.max(w.counts[i], 1));
			}
		});
	}
});
