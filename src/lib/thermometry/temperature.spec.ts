import { describe, expect, it } from 'vitest';
import { BOLTZMANN_K, C2_CM_K, PLANCK_H, SPEED_OF_LIGHT_C, laserWavenumber } from './constants';
import {
	cFromReference,
	ratioFromTemperature,
	referenceSensitivities,
	rho,
	sensitivities,
	temperatureFromRatio,
	temperatureFromReference
} from './temperature';
import { EngineError } from './types';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('constants', () => {
	it('uses the exact SI 2019 values of h, c and k_B', () => {
		// Source: CODATA/SI 2019 exact (physics.md §3).
		expect(PLANCK_H).toBe(6.62607015e-34);
		expect(SPEED_OF_LIGHT_C).toBe(299792458);
		expect(BOLTZMANN_K).toBe(1.380649e-23);
	});
	it('derives c₂ = hc/k_B = 1.438 776 877 503 933 8… cm K', () => {
		// Source: CODATA/SI 2019 exact; 30-digit value in physics.md §3 [D]; SciPy 0.014387768775039337 m K [C].
		expect(rel(C2_CM_K, 1.4387768775039338)).toBeLessThan(4e-16);
		expect(rel(C2_CM_K / 100, 0.014387768775039337)).toBeLessThan(4e-16);
		// k_B/(hc) = 0.695 034 800 486 127 cm⁻¹ K⁻¹ (physics.md §3 [D])
		expect(rel(1 / C2_CM_K, 0.695034800486127)).toBeLessThan(1e-14);
	});
});

describe('facts of the trade', () => {
	it('puts the Stokes band at ν̃L − ν̃m and the anti-Stokes band at ν̃L + ν̃m (absolute)', () => {
		// Source: physics.md §1.1 (definition of ρ) — common practice.
		const nuL = laserWavenumber(532);
		expect(nuL).toBeCloseTo(18796.992, 3);
		// A shift Δν̃ = ν̃L − ν̃scattered: Stokes +520.7 ⇒ 18276.29, anti-Stokes −520.7 ⇒ 19317.69.
		const stokesAbs = nuL - 520.7;
		const antiStokesAbs = nuL + 520.7;
		expect(rho(nuL, 520.7)).toBeCloseTo(antiStokesAbs / stokesAbs, 15);
		expect(antiStokesAbs).toBeGreaterThan(nuL);
		expect(stokesAbs).toBeLessThan(nuL);
	});
	it('makes the anti-Stokes band weaker at room temperature and the ratio rise with T', () => {
		// Source: physics.md §1.1 (Boltzmann factor) — common practice.
		const m = { laserCm1: laserWavenumber(532), modeCm1: 520.7, exponent: 3 as const, c: 1 };
		const r300 = ratioFromTemperature(300, m);
		expect(r300).toBeLessThan(1);
		expect(r300).toBeGreaterThan(0.09);
		expect(r300).toBeLessThan(0.1); // physics.md §2.2: N_AS ≈ 9.7·10³ for N_S = 10⁵
		expect(ratioFromTemperature(600, m)).toBeGreaterThan(r300);
	});
	it('round-trips T → R → T', () => {
		// Source: physics.md §1.1 [D] — algebraic identity.
		for (const t of [150, 300, 812.5, 1500]) {
			for (const n of [3, 4] as const) {
				const m = { laserCm1: laserWavenumber(633), modeCm1: 1332.5, exponent: n, c: 0.83 };
				expect(rel(temperatureFromRatio(ratioFromTemperature(t, m), m), t)).toBeLessThan(1e-12);
			}
		}
	});
	it('reproduces the size of the exponent-3-vs-4 mistake for Si at 300 K', () => {
		// Source: physics.md §1.1 [D]: photon-count data analysed with n = 4 gives
		// 294.0 K (488), 293.5 K (532), 292.3 K (633), 290.5 K (785).
		const expected: [number, number][] = [
			[488, 294.0],
			[532, 293.5],
			[633, 292.3],
			[785, 290.5]
		];
		for (const [nm, t4] of expected) {
			const laserCm1 = laserWavenumber(nm);
			const r = ratioFromTemperature(300, { laserCm1, modeCm1: 520.7, exponent: 3, c: 1 });
			const wrong = temperatureFromRatio(r, { laserCm1, modeCm1: 520.7, exponent: 4, c: 1 });
			expect(wrong).toBeCloseTo(t4, 1);
			// first-order estimate ΔT ≈ −(T²/(c₂ν̃m))·ln ρ (physics.md §1.1)
			const first = -((300 * 300) / (C2_CM_K * 520.7)) * Math.log(rho(laserCm1, 520.7));
			expect(Math.abs(wrong - 300 - first)).toBeLessThan(0.5);
		}
	});
	it('refuses a laser wavenumber that is not above the mode', () => {
		// Source: physics.md §1.1 (ρ needs ν̃L > ν̃m) — common practice.
		expect(() => rho(500, 520.7)).toThrow(EngineError);
	});
	it('returns NaN, not a number, for an unphysical ratio', () => {
		// Source: physics.md §1.1: the denominator n ln ρ + ln C − ln R must be positive.
		const m = { laserCm1: laserWavenumber(532), modeCm1: 520.7, exponent: 3 as const, c: 1 };
		expect(temperatureFromRatio(-0.1, m)).toBeNaN();
		expect(temperatureFromRatio(1.5, m)).toBeNaN();
	});
});

describe('sensitivity coefficients', () => {
	const cases = [
		{ nm: 532, mode: 520.7, t: 300, n: 3 as const, c: 1 },
		{ nm: 785, mode: 520.7, t: 300, n: 3 as const, c: 1 },
		{ nm: 633, mode: 1332.5, t: 700, n: 4 as const, c: 0.9 },
		{ nm: 488, mode: 300.7, t: 300, n: 3 as const, c: 1.1 }
	];
	it('match central-difference derivatives of T(R, C, ν̃m, ν̃L)', () => {
		// Source: physics.md §2.1 [D, "each checked numerically"]; checked here again.
		for (const k of cases) {
			const nuL = laserWavenumber(k.nm);
			const base = { laserCm1: nuL, modeCm1: k.mode, exponent: k.n, c: k.c };
			const r = ratioFromTemperature(k.t, base);
			const s = sensitivities(k.t, r, base);
			const T = (o: Partial<typeof base>, rr = r) => temperatureFromRatio(rr, { ...base, ...o });
			const h = 1e-6;
			expect(rel(s.ratio, (T({}, r * (1 + h)) - T({}, r * (1 - h))) / (2 * h * r))).toBeLessThan(
				1e-6
			);
			expect(
				rel(s.c, (T({ c: k.c * (1 + h) }) - T({ c: k.c * (1 - h) })) / (2 * h * k.c))
			).toBeLessThan(1e-6);
			expect(
				rel(s.mode, (T({ modeCm1: k.mode + 1e-4 }) - T({ modeCm1: k.mode - 1e-4 })) / 2e-4)
			).toBeLessThan(1e-5);
			expect(
				rel(s.laser, (T({ laserCm1: nuL + 1e-2 }) - T({ laserCm1: nuL - 1e-2 })) / 2e-2)
			).toBeLessThan(1e-4);
		}
	});
	it('reproduce the physics.md §2.1 table at 300 K', () => {
		// Source: physics.md §2.1 table [D].
		const at = (nm: number, mode: number) => {
			const base = { laserCm1: laserWavenumber(nm), modeCm1: mode, exponent: 3 as const, c: 1 };
			return sensitivities(300, ratioFromTemperature(300, base), base);
		};
		expect(at(532, 520.7).k).toBeCloseTo(120.1, 1);
		expect(at(532, 520.7).k * 0.01).toBeCloseTo(1.2, 2);
		expect(at(532, 520.7).mode).toBeCloseTo(0.538, 3);
		expect(at(785, 520.7).mode).toBeCloseTo(0.52, 2);
		expect(Math.abs(at(532, 520.7).laser)).toBeLessThan(2e-3);
		expect(at(532, 1332.5).k).toBeCloseTo(46.9, 1);
		expect(at(532, 1332.5).mode).toBeCloseTo(0.21, 2);
		expect(at(532, 300.7).k).toBeCloseTo(208, 0);
		expect(at(532, 300.7).mode).toBeCloseTo(0.93, 2);
		// "a 2 % response error gives ≈2.4 K for Si at room temperature"
		expect(Math.abs(at(532, 520.7).c * 0.02)).toBeCloseTo(2.4, 1);
	});
	it('of the reference form match numerical derivatives, and ∂T/∂T₀ = (T/T₀)²', () => {
		// Source: physics.md §1.3a [D].
		const r0 = 0.0971;
		const t0 = 295;
		const r = 0.16;
		const mode = 520.7;
		const t = temperatureFromReference(r, r0, t0, mode);
		const s = referenceSensitivities(t, r, r0, t0, mode);
		const h = 1e-6;
		const num = (f: (d: number) => number, step: number) => (f(step) - f(-step)) / (2 * step);
		expect(
			rel(
				s.ratio,
				num((d) => temperatureFromReference(r + d, r0, t0, mode), r * h)
			)
		).toBeLessThan(1e-6);
		expect(
			rel(
				s.r0,
				num((d) => temperatureFromReference(r, r0 + d, t0, mode), r0 * h)
			)
		).toBeLessThan(1e-6);
		expect(
			rel(
				s.t0,
				num((d) => temperatureFromReference(r, r0, t0 + d, mode), 1e-4)
			)
		).toBeLessThan(1e-6);
		expect(rel(s.t0, (t / t0) ** 2)).toBeLessThan(1e-12);
		expect(
			rel(
				s.mode,
				num((d) => temperatureFromReference(r, r0, t0, mode + d), 1e-4)
			)
		).toBeLessThan(1e-5);
	});
});

describe('reference-temperature form', () => {
	it('agrees with the direct form through C = R₀ρ⁻ⁿe^(c₂ν̃m/T₀), for n = 3 and n = 4 alike', () => {
		// Source: physics.md §1.3a [D]: the frequency factor cancels.
		const laserCm1 = laserWavenumber(532);
		for (const n of [3, 4] as const) {
			const truth = { laserCm1, modeCm1: 520.7, exponent: n, c: 0.87 };
			const r0 = ratioFromTemperature(296.15, truth);
			const r = ratioFromTemperature(512.3, truth);
			const c = cFromReference(r0, 296.15, laserCm1, 520.7, n);
			expect(rel(c, 0.87)).toBeLessThan(1e-12);
			expect(temperatureFromReference(r, r0, 296.15, 520.7)).toBeCloseTo(512.3, 9);
		}
		// The exponent drops out: the reference form never sees n.
		const r0 = ratioFromTemperature(300, { laserCm1, modeCm1: 520.7, exponent: 3, c: 1 });
		const r = ratioFromTemperature(400, { laserCm1, modeCm1: 520.7, exponent: 3, c: 1 });
		expect(temperatureFromReference(r, r0, 300, 520.7)).toBeCloseTo(400, 9);
	});
});
