import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { levenbergMarquardt as mlLevenbergMarquardt } from 'ml-levenberg-marquardt';
import { Matrix, inverse } from 'ml-matrix';
import { levenbergMarquardt, type LeastSquaresModel } from './levenberg-marquardt';

/** NIST StRD file: starting values and certified values on lines 41–48, data on 61–310. */
function readStrd(name: string) {
	const lines = readFileSync(`fixtures/nist-strd/${name}.dat`, 'utf8').split('\n');
	const start1: number[] = [];
	const start2: number[] = [];
	const certified: number[] = [];
	const certifiedSd: number[] = [];
	for (let l = 40; l < 48; l++) {
		const m = lines[l].split('=')[1].trim().split(/\s+/).map(Number);
		start1.push(m[0]);
		start2.push(m[1]);
		certified.push(m[2]);
		certifiedSd.push(m[3]);
	}
	const rss = Number(lines[49].split(':')[1]);
	const x: number[] = [];
	const y: number[] = [];
	for (let l = 60; l < 310; l++) {
		const [yy, xx] = lines[l].trim().split(/\s+/).map(Number);
		x.push(xx);
		y.push(yy);
	}
	return { start1, start2, certified, certifiedSd, rss, x, y };
}

/** The StRD Gauss model y = b1 e^(−b2 x) + b3 e^(−(x−b4)²/b5²) + b6 e^(−(x−b7)²/b8²) with its analytic Jacobian. */
function gaussModel(x: number[]): LeastSquaresModel {
	return {
		nParams: 8,
		nPoints: x.length,
		evaluate(b, f, jac) {
			for (let i = 0; i < x.length; i++) {
				const xi = x[i];
				const e1 = Math.exp(-b[1] * xi);
				const u1 = (xi - b[3]) / b[4];
				const g1 = Math.exp(-u1 * u1);
				const u2 = (xi - b[6]) / b[7];
				const g2 = Math.exp(-u2 * u2);
				f[i] = b[0] * e1 + b[2] * g1 + b[5] * g2;
				if (jac) {
					// column-major: jac[j·N + i] = ∂fᵢ/∂bⱼ
					const n = x.length;
					jac[i] = e1;
					jac[n + i] = -b[0] * xi * e1;
					jac[2 * n + i] = g1;
					jac[3 * n + i] = (b[2] * g1 * 2 * u1) / b[4];
					jac[4 * n + i] = (b[2] * g1 * 2 * u1 * u1) / b[4];
					jac[5 * n + i] = g2;
					jac[6 * n + i] = (b[5] * g2 * 2 * u2) / b[7];
					jac[7 * n + i] = (b[5] * g2 * 2 * u2 * u2) / b[7];
				}
			}
		}
	};
}

/** Log relative error, NIST's measure of agreement (digits in common). */
const lre = (v: number, c: number) => (v === c ? 15 : -Math.log10(Math.abs(v - c) / Math.abs(c)));

describe('levenberg-marquardt against NIST StRD', () => {
	for (const name of ['Gauss1', 'Gauss2', 'Gauss3']) {
		for (const startName of ['start1', 'start2'] as const) {
			it(`${name} from ${startName}: certified parameters and standard deviations`, () => {
				// Source: NIST StRD nonlinear regression, ${name} (Rust, NIST 1996), certified values.
				const d = readStrd(name);
				const ones = new Float64Array(d.x.length).fill(1);
				const fit = levenbergMarquardt(gaussModel(d.x), d.y, ones, d[startName], {
					ftol: 1e-15,
					xtol: 1e-13,
					maxIterations: 1000,
					// NIST certifies s·√diag((JᵀJ)⁻¹) with s² = RSS/(N − p).
					scaleCovariance: true
				});
				expect(fit.converged).toBe(true);
				expect(lre(fit.chi2, d.rss)).toBeGreaterThanOrEqual(6);
				for (let j = 0; j < 8; j++) {
					expect(lre(fit.params[j], d.certified[j])).toBeGreaterThanOrEqual(6);
					const sd = Math.sqrt(fit.covariance[j * 8 + j]);
					expect(lre(sd, d.certifiedSd[j])).toBeGreaterThanOrEqual(4);
				}
			});
		}
	}

	it('agrees with ml-levenberg-marquardt on a Lorentzian band on a sloped baseline', () => {
		// Outside cross-check (common practice): a second, independent implementation.
		// Invented, noise-free-plus-deterministic-ripple data (synthetic fixture).
		const x: number[] = [];
		const y: number[] = [];
		for (let i = 0; i < 120; i++) {
			const xi = 490 + i * 0.5;
			x.push(xi);
			const l = (200 * (2 / Math.PI / 3.2)) / (1 + 4 * ((xi - 520.6) / 3.2) ** 2);
			y.push(l + 5 + 0.02 * (xi - 520) + 0.3 * Math.sin(i * 1.7));
		}
		const model: LeastSquaresModel = {
			nParams: 5,
			nPoints: x.length,
			evaluate(p, f, jac) {
				for (let i = 0; i < x.length; i++) {
					const u = (x[i] - p[1]) / p[2];
					const q = 1 / (1 + 4 * u * u);
					const l = ((p[0] * 2) / Math.PI / p[2]) * q;
					f[i] = l + p[3] + p[4] * (x[i] - 520);
					if (jac) {
						const n = x.length;
						jac[i] = l / p[0];
						jac[n + i] = (l * 8 * u * q) / p[2];
						jac[2 * n + i] = (l / p[2]) * (8 * u * u * q - 1);
						jac[3 * n + i] = 1;
						jac[4 * n + i] = x[i] - 520;
					}
				}
			}
		};
		const start = [150, 520, 4, 4, 0];
		const ours = levenbergMarquardt(model, y, new Float64Array(x.length).fill(1), start);
		const theirs = mlLevenbergMarquardt(
			{ x, y },
			([a, c, w, b0, b1]: number[]) =>
				(xi: number) =>
					(a * 2) / Math.PI / w / (1 + 4 * ((xi - c) / w) ** 2) + b0 + b1 * (xi - 520),
			{ initialValues: start, maxIterations: 300, damping: 1e-2, errorTolerance: 1e-12 }
		);
		expect(ours.converged).toBe(true);
		for (let j = 0; j < 4; j++) {
			expect(Math.abs(theirs.parameterValues[j] - ours.params[j])).toBeLessThan(
				1e-4 * Math.max(1, Math.abs(ours.params[j]))
			);
		}
	});

	it('has the covariance s²(JᵀJ)⁻¹ that ml-matrix computes by hand on Gauss1', () => {
		// Outside cross-check: ml-matrix inverse of JᵀJ from our Jacobian at our solution.
		const d = readStrd('Gauss1');
		const ours = levenbergMarquardt(gaussModel(d.x), d.y, new Float64Array(250).fill(1), d.start1, {
			ftol: 1e-15,
			xtol: 1e-13,
			maxIterations: 1000,
			scaleCovariance: true
		});
		const jac = new Float64Array(250 * 8);
		gaussModel(d.x).evaluate(ours.params, new Float64Array(250), jac);
		const J = new Matrix(250, 8);
		for (let i = 0; i < 250; i++) for (let j = 0; j < 8; j++) J.set(i, j, jac[j * 250 + i]);
		const cov = inverse(J.transpose().mmul(J)).mul(ours.chi2 / (250 - 8));
		for (let j = 0; j < 8; j++) {
			expect(Math.abs(cov.get(j, j) - ours.covariance[j * 8 + j]) / cov.get(j, j)).toBeLessThan(
				1e-6
			);
		}
	});

	it('keeps a held parameter fixed and reports a zero variance for it', () => {
		// Common practice: held parameters are constants of the fit.
		const d = readStrd('Gauss1');
		const start = d.certified.slice();
		start[1] = 0.0105;
		const fit = levenbergMarquardt(gaussModel(d.x), d.y, new Float64Array(250).fill(1), start, {
			free: [1, 0, 1, 1, 1, 1, 1, 1]
		});
		expect(fit.params[1]).toBe(0.0105);
		expect(fit.covariance[9]).toBe(0);
		expect(fit.dof).toBe(243);
	});
});
