/**
 * Seeded random numbers, so that synthetic spectra and Monte Carlo runs repeat exactly.
 *  - mulberry32 (Tommy Ettinger, 2017): a tiny 32-bit generator, good enough for simulation.
 *  - Box–Muller (1958) for standard normals.
 *  - Poisson: inversion by multiplication for small means (Knuth), and Hörmann's transformed
 *    rejection PTRS (Insurance: Math. Econ. 12, 39 (1993)) for means ≥ 10.
 */
import { lnGamma } from './statistics';

export interface Rng {
	/** Uniform on [0, 1). */
	uniform(): number;
	normal(): number;
	poisson(mean: number): number;
	readonly seed: number;
}

export function mulberry32(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

export function createRng(seed = 1): Rng {
	const u = mulberry32(seed);
	let spare = NaN;
	const normal = () => {
		if (!Number.isNaN(spare)) {
			const s = spare;
			spare = NaN;
			return s;
		}
		let u1 = u();
		while (u1 === 0) u1 = u();
		const r = Math.sqrt(-2 * Math.log(u1));
		const th = 2 * Math.PI * u();
		spare = r * Math.sin(th);
		return r * Math.cos(th);
	};
	const poisson = (lam: number): number => {
		if (!(lam > 0)) return 0;
		if (lam < 10) {
			const l = Math.exp(-lam);
			let k = 0;
			let p = u();
			while (p > l) {
				k++;
				p *= u();
			}
			return k;
		}
		const slam = Math.sqrt(lam);
		const loglam = Math.log(lam);
		const b = 0.931 + 2.53 * slam;
		const a = -0.059 + 0.02483 * b;
		const invalpha = 1.1239 + 1.1328 / (b - 3.4);
		const vr = 0.9277 - 3.6224 / (b - 2);
		for (;;) {
			const uu = u() - 0.5;
			const v = u();
			const us = 0.5 - Math.abs(uu);
			const k = Math.floor(((2 * a) / us + b) * uu + lam + 0.43);
			if (us >= 0.07 && v <= vr) return k;
			if (k < 0 || (us < 0.013 && v > us)) continue;
			if (
				Math.log(v) + Math.log(invalpha) - Math.log(a / (us * us) + b) <=
				-lam + k * loglam - lnGamma(k + 1)
			) {
				return k;
			}
		}
	};
	return { uniform: u, normal, poisson, seed };
}
