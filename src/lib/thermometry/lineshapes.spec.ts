import { describe, expect, it } from 'vitest';
import { extractRegion, SingleBandModel } from './band-fit';
import { JointModel } from './joint-fit';
import {
	areaFromHeight,
	GAUSSIAN,
	LORENTZIAN,
	peakHeight,
	profile,
	PSEUDO_VOIGT,
	type ShapeCode
} from './lineshapes';
import { syntheticPair } from './synthetic';

const SHAPES: [string, ShapeCode][] = [
	['lorentzian', LORENTZIAN],
	['gaussian', GAUSSIAN],
	['pseudo-voigt', PSEUDO_VOIGT]
];

describe('lineshapes', () => {
	it('have unit area, their FWHM and their peak at the centre', () => {
		// Source: definitions of the area-normalised Lorentzian, Gaussian and pseudo-Voigt — common practice.
		for (const [, code] of SHAPES) {
			let area = 0;
			const h = 0.001;
			// Lorentzian tails fall as 1/x²: integrate far and add the analytic tail 2·(w/2π)/X.
			const X = 2000;
			for (let x = -X; x < X; x += h) area += profile(code, x + h / 2, 0, 3, 0.4, null) * h;
			const tail =
				code === GAUSSIAN ? 0 : ((code === LORENTZIAN ? 1 : 0.4) * 2 * 3) / (2 * Math.PI * X);
			expect(area + tail).toBeCloseTo(1, 5);
			const peak = profile(code, 7, 7, 3, 0.4, null);
			expect(profile(code, 8.5, 7, 3, 0.4, null) / peak).toBeCloseTo(0.5, 12);
			expect(profile(code, 5.5, 7, 3, 0.4, null) / peak).toBeCloseTo(0.5, 12);
		}
		expect(peakHeight('gaussian', 1, 2)).toBeCloseTo(Math.sqrt((4 * Math.LN2) / Math.PI) / 2, 15);
		expect(areaFromHeight('lorentzian', peakHeight('lorentzian', 5, 3), 3)).toBeCloseTo(5, 12);
	});
	it('have analytic derivatives equal to central differences', () => {
		// Source: calculus — checked numerically here (common practice).
		const d = new Float64Array(3);
		for (const [, code] of SHAPES) {
			for (const x of [-4, -0.7, 0.3, 2.2, 9]) {
				profile(code, x, 0.5, 2.5, 0.35, d);
				const f = (c: number, w: number, e: number) => profile(code, x, c, w, e, null);
				const h = 1e-6;
				expect(d[0]).toBeCloseTo((f(0.5 + h, 2.5, 0.35) - f(0.5 - h, 2.5, 0.35)) / (2 * h), 7);
				expect(d[1]).toBeCloseTo((f(0.5, 2.5 + h, 0.35) - f(0.5, 2.5 - h, 0.35)) / (2 * h), 7);
				expect(d[2]).toBeCloseTo((f(0.5, 2.5, 0.35 + h) - f(0.5, 2.5, 0.35 - h)) / (2 * h), 7);
			}
		}
	});
});

/** Largest relative mismatch between the model's analytic Jacobian and central differences. */
function jacobianMismatch(
	model: { nParams: number; nPoints: number; evaluate: SingleBandModel['evaluate'] },
	p: number[]
) {
	const n = model.nPoints;
	const np = model.nParams;
	const jac = new Float64Array(n * np);
	const f0 = new Float64Array(n);
	model.evaluate(Float64Array.from(p), f0, jac);
	let worst = 0;
	for (let j = 0; j < np; j++) {
		const h = 1e-6 * Math.max(Math.abs(p[j]), 1);
		const up = Float64Array.from(p);
		const dn = Float64Array.from(p);
		up[j] += h;
		dn[j] -= h;
		const fu = new Float64Array(n);
		const fd = new Float64Array(n);
		model.evaluate(up, fu, null);
		model.evaluate(dn, fd, null);
		let scale = 0;
		for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(jac[j * n + i]));
		for (let i = 0; i < n; i++) {
			const num = (fu[i] - fd[i]) / (2 * h);
			worst = Math.max(worst, Math.abs(num - jac[j * n + i]) / (scale || 1));
		}
	}
	return worst;
}

describe('fit models', () => {
	const pair = syntheticPair({
		laserNm: 633,
		modeCm1: 520.7,
		temperatureK: 450,
		exponent: 3,
		lineshape: 'pseudo-voigt',
		fwhmCm1: 3.5,
		stokesCounts: 1e5,
		seed: 1
	});
	const sRegion = extractRegion(pair.stokes.prepared, 500, 540, 520);
	const aRegion = extractRegion(pair.antiStokes.prepared, -540, -500, -520);
	it('single band: the analytic Jacobian equals central differences', () => {
		// Source: calculus — common practice for hand-written Jacobians.
		for (const [name, code] of SHAPES) {
			const m = new SingleBandModel(sRegion, code, name === 'pseudo-voigt');
			const p = [1e5, 520.9, 3.3, 12, 0.1];
			if (name === 'pseudo-voigt') p.push(0.4);
			expect(jacobianMismatch(m, p)).toBeLessThan(1e-6);
		}
	});
	it('joint model: the analytic Jacobian equals central differences, direct and reference forms', () => {
		// Source: calculus — the T, shift and offset columns carry the Boltzmann and ρⁿ factors.
		for (const lineshape of ['lorentzian', 'gaussian', 'pseudo-voigt'] as const) {
			for (const factor of [
				{ kind: 'direct' as const, c: 0.9 },
				{ kind: 'reference' as const, r0: 0.1, t0: 296 }
			]) {
				const m = new JointModel(sRegion, aRegion, lineshape, 1e7 / 633, 3, factor);
				const p = [1e5, 455, 520.4, 3.4, 0.8, 5, 0.01, 2, -0.02];
				if (lineshape === 'pseudo-voigt') p.push(0.45);
				expect(jacobianMismatch(m, p)).toBeLessThan(1e-6);
			}
		}
	});
});
