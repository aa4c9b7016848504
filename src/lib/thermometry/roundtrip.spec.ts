/**
 * Round trips on synthetic spectra (invented data, seeded): known T in, T ± U out.
 * Acceptance (issue 3): over ≥ 200 cases the true T lies inside the reported 95 % interval in
 * 93–97 % of them; over repeated noise the spread matches the reported u within 15 % and the
 * bias is within 0.2 u.
 */
import { describe, expect, it } from 'vitest';
import { estimate } from './estimate';
import { randomSyntheticSpec as randomCase, syntheticPair, type SyntheticSpec } from './synthetic';

function run(spec: SyntheticSpec, nominalMode = spec.modeCm1) {
	const p = syntheticPair(spec);
	return estimate(p.stokes.prepared, p.antiStokes.prepared, {
		laserNm: spec.laserNm,
		modes: [nominalMode],
		exponent: spec.exponent,
		lineshape: spec.lineshape,
		// C exactly known here: the test is about the counting statistics.
		response: { kind: 'constant', c: spec.c ?? 1, u_c: 0 }
	});
}

describe('round trips on synthetic spectra', () => {
	it('covers the true temperature in 93–97 % of 1000 seeded cases', () => {
		// Source: issue 3 acceptance; synthetic data (invented).
		let inside = 0;
		let total = 0;
		const failures: string[] = [];
		for (let i = 0; i < 1000; i++) {
			const spec = randomCase(i);
			const r = run(spec);
			if (r.temperature_k === null) {
				// A refusal must say why (an error flag); hopeless cases (e.g. fluorescence swamping a
				// faint anti-Stokes band) are refused, not guessed.
				expect(r.flags.some((f) => f.severity === 'error')).toBe(true);
				failures.push(`${i}: ${r.flags.map((f) => f.code).join(',')}`);
				continue;
			}
			total++;
			if (Math.abs(r.temperature_k - spec.temperatureK) <= r.expanded_uncertainty_k!) inside++;
		}
		const coverage = inside / total;
		console.info(
			`coverage ${(100 * coverage).toFixed(1)} % of ${total}; no result: ${failures.length}`,
			failures.slice(0, 5)
		);
		expect(failures.length).toBeLessThanOrEqual(10);
		expect(coverage).toBeGreaterThanOrEqual(0.93);
		expect(coverage).toBeLessThanOrEqual(0.97);
	});

	const repeated: [string, SyntheticSpec][] = [
		[
			'Si 532 nm 300 K Lorentzian',
			{
				laserNm: 532,
				modeCm1: 520.7,
				temperatureK: 300,
				exponent: 3,
				lineshape: 'lorentzian',
				fwhmCm1: 3.5,
				stokesCounts: 1e5,
				baseline: { level: 40, slope: 1e-3 },
				axisOffsetCm1: 1.7
			}
		],
		[
			'Ge 785 nm 650 K pseudo-Voigt',
			{
				laserNm: 785,
				modeCm1: 300.7,
				temperatureK: 650,
				exponent: 3,
				lineshape: 'pseudo-voigt',
				eta: 0.6,
				fwhmCm1: 5.3,
				stokesCounts: 3e4,
				darkCounts: 300,
				spikes: 3,
				window: { halfRangeCm1: 150 }
			}
		],
		[
			'diamond 633 nm 1100 K Gaussian, curved baseline',
			{
				laserNm: 633,
				modeCm1: 1332.5,
				temperatureK: 1100,
				exponent: 4,
				lineshape: 'gaussian',
				fwhmCm1: 2.5,
				stokesCounts: 2e5,
				c: 0.9,
				baseline: { level: 200, slope: -1e-3, curvature: 2e-6, antiStokesFraction: 0.1 }
			}
		],
		[
			'Si 488 nm 220 K, weak anti-Stokes (≈1.4·10³ counts)',
			{
				laserNm: 488,
				modeCm1: 520.7,
				temperatureK: 220,
				exponent: 3,
				lineshape: 'lorentzian',
				fwhmCm1: 3,
				stokesCounts: 4e4
			}
		]
	];
	for (const [name, base] of repeated) {
		it(`spread over repeated noise matches u and is unbiased: ${name}`, () => {
			// Source: issue 3 acceptance; synthetic data (invented).
			const ts: number[] = [];
			const us: number[] = [];
			for (let k = 0; k < 200; k++) {
				const r = run({ ...base, seed: 90_000 + k });
				expect(r.temperature_k).not.toBeNull();
				ts.push(r.temperature_k!);
				us.push(r.u_temperature_k!);
			}
			const mean = ts.reduce((a, b) => a + b, 0) / ts.length;
			const sd = Math.sqrt(ts.reduce((a, b) => a + (b - mean) ** 2, 0) / (ts.length - 1));
			const u = us.reduce((a, b) => a + b, 0) / us.length;
			console.info(
				`${name}: mean ${mean.toFixed(2)} K, sd ${sd.toFixed(3)} K, mean u ${u.toFixed(3)} K, sd/u ${(sd / u).toFixed(3)}, bias/u ${((mean - base.temperatureK) / u).toFixed(3)}`
			);
			expect(Math.abs(sd / u - 1)).toBeLessThan(0.15);
			expect(Math.abs(mean - base.temperatureK)).toBeLessThan(0.2 * u);
		});
	}
});
