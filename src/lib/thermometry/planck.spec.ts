import { describe, expect, it } from 'vitest';
import { BOLTZMANN_K, PLANCK_H, SPEED_OF_LIGHT_C, laserWavenumber } from './constants';
import {
	lampCalibration,
	lampResponse,
	radianceEnergyWavelength,
	radianceEnergyWavenumber,
	radiancePhotonWavelength,
	radiancePhotonWavenumber,
	responseRatio,
	tableLampCalibration
} from './planck';
import { wavelengthUniformAxis } from './synthetic';
import { EngineError } from './types';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const h = PLANCK_H;
const c = SPEED_OF_LIGHT_C;
const k = BOLTZMANN_K;

/** Root of 5(1 − e⁻ˣ) = x by Newton's method, started near it. */
function wienX(): number {
	let x = 5;
	for (let i = 0; i < 50; i++) {
		const f = 5 * (1 - Math.exp(-x)) - x;
		const df = 5 * Math.exp(-x) - 1;
		x -= f / df;
	}
	return x;
}

/** Golden-section search for the maximum of f on [a, b]. */
function argmax(f: (x: number) => number, a: number, b: number): number {
	const g = (Math.sqrt(5) - 1) / 2;
	let x1 = b - g * (b - a);
	let x2 = a + g * (b - a);
	let f1 = f(x1);
	let f2 = f(x2);
	for (let i = 0; i < 200 && b - a > 1e-15 * b; i++) {
		if (f1 < f2) {
			a = x1;
			x1 = x2;
			f1 = f2;
			x2 = a + g * (b - a);
			f2 = f(x2);
		} else {
			b = x2;
			x2 = x1;
			f2 = f1;
			x1 = b - g * (b - a);
			f1 = f(x1);
		}
	}
	return (a + b) / 2;
}

describe("Planck's law against outside references", () => {
	it("puts the peak of L_λ at λ_max·T = b, Wien's displacement constant", () => {
		// Source: CODATA 2018/2022, b = 2.897 771 955… × 10⁻³ m K, exact from h, c, k_B:
		// b = hc/(k_B x) with x the root of 5(1 − e⁻ˣ) = x, x = 4.965 114 231 744 276…
		const x = wienX();
		expect(x).toBeCloseTo(4.965114231744276, 14);
		const b = (h * c) / (k * x);
		expect(rel(b, 2.897771955e-3)).toBeLessThan(1e-9);
		for (const t of [300, 1000, 2856, 3200, 5772]) {
			const peak = argmax((l) => radianceEnergyWavelength(l, t), (0.5 * b) / t, (2 * b) / t);
			// A maximum is flat, so a numerical search pins it to about √ε.
			expect(rel(peak * t, b)).toBeLessThan(1e-7);
		}
	});

	it('integrates π∫L_λ dλ to σT⁴, the Stefan–Boltzmann law', () => {
		// Source: CODATA 2018/2022, σ = 2π⁵k⁴/(15h³c²) = 5.670 374 419… × 10⁻⁸ W m⁻² K⁻⁴ (exact).
		const sigma = (2 * Math.PI ** 5 * k ** 4) / (15 * h ** 3 * c ** 2);
		expect(rel(sigma, 5.670374419e-8)).toBeLessThan(2e-10);
		for (const t of [300, 2856, 5772]) {
			// Simpson's rule in ln λ from 1/200 to 10⁴ times the peak: both tails are below 10⁻¹¹.
			const peak = 2.897771955e-3 / t;
			const u0 = Math.log(peak / 200);
			const u1 = Math.log(peak * 1e4);
			const n = 20000;
			const du = (u1 - u0) / n;
			let sum = 0;
			for (let i = 0; i <= n; i++) {
				const l = Math.exp(u0 + i * du);
				const w = i === 0 || i === n ? 1 : i % 2 ? 4 : 2;
				sum += w * radianceEnergyWavelength(l, t) * l;
			}
			const exitance = (Math.PI * sum * du) / 3;
			expect(rel(exitance, sigma * t ** 4)).toBeLessThan(1e-9);
		}
	});
});

describe('the four forms of the radiance agree', () => {
	it('L_ν̃ = λ²L_λ, and photon radiance is energy radiance over hc/λ = hcν̃', () => {
		// Source: physics.md §1.3b [M/D: standard Planck law]; change of variable ν̃ = 1/λ.
		for (const t of [2800, 3200]) {
			for (const nm of [450, 532, 633, 785, 1064]) {
				const l = nm * 1e-9;
				const nu = 1 / l;
				const eL = radianceEnergyWavelength(l, t);
				expect(rel(radianceEnergyWavenumber(nu, t), eL * l * l)).toBeLessThan(1e-12);
				expect(rel(radiancePhotonWavelength(l, t), eL / ((h * c) / l))).toBeLessThan(1e-12);
				expect(
					rel(radiancePhotonWavenumber(nu, t), radianceEnergyWavenumber(nu, t) / (h * c * nu))
				).toBeLessThan(1e-12);
			}
		}
	});
	it('refuses a non-positive wavelength or temperature', () => {
		expect(() => radianceEnergyWavelength(0, 3000)).toThrow(EngineError);
		expect(() => radiancePhotonWavenumber(1e6, -1)).toThrow(EngineError);
	});
});

describe('lamp response', () => {
	// An invented instrument: grating and filter response falling towards the red.
	const truth = (shift: number) => 0.6 + 0.3 * Math.cos((shift + 200) / 900) - 1e-4 * shift;
	const laserNm = 532;
	const tc = 2856;
	const axis = wavelengthUniformAxis(laserNm, -1200, 1200, 801);
	const nuL = laserWavenumber(laserNm);
	const counts = Array.from(axis, (s, i) => {
		const n = axis.length;
		const width =
			(axis[Math.min(i + 1, n - 1)] - axis[Math.max(i - 1, 0)]) / (i === 0 || i === n - 1 ? 1 : 2);
		return 1e-12 * truth(s) * radiancePhotonWavenumber((nuL - s) * 100, tc) * width * 100;
	});

	it('gives back the response a synthetic lamp was seen through', () => {
		// Source: physics.md §1.3b — counts ÷ (photon radiance × pixel bandwidth); synthetic data.
		const curve = lampResponse({ shift: axis, counts }, laserNm, tc);
		const top = Math.max(...Array.from(axis, truth));
		for (let i = 0; i < axis.length; i++) {
			expect(rel(curve.response[i], truth(axis[i]) / top)).toBeLessThan(1e-12);
		}
		const r = responseRatio(curve, 520.7, 0.01);
		expect(rel(r.c, truth(-520.7) / truth(520.7))).toBeLessThan(1e-4);
		expect(rel(r.u_c, r.c * Math.SQRT2 * 0.01)).toBeLessThan(1e-12);
	});

	it('is wrong by the energy/photon factor when the lamp is read in energy units', () => {
		// Source: physics.md §1.3b: divide by the PHOTON radiance; energy units would tilt C by ρ.
		const curve = lampResponse({ shift: axis, counts }, laserNm, tc);
		const photonC = responseRatio(curve, 520.7).c;
		const rho = (nuL + 520.7) / (nuL - 520.7);
		const energyCounts = counts.map((x, i) => x * h * c * (nuL - axis[i]) * 100);
		const tilted = responseRatio(
			lampResponse({ shift: axis, counts: energyCounts }, laserNm, tc),
			520.7
		).c;
		expect(rel(tilted / photonC, rho)).toBeLessThan(1e-3);
	});

	it('refuses an axis that is not ascending', () => {
		expect(() => lampResponse({ shift: [1, 0], counts: [1, 1] }, 532, 2856)).toThrow(EngineError);
	});
});

describe('lamp calibration budget', () => {
	it('carries u(T_c) into u(C) with the derivative of the Planck ratio', () => {
		// Source: physics.md §2.1 (GUM law of propagation) applied to C(T_c); checked by central difference.
		const laserNm = 532;
		const nuL = laserWavenumber(laserNm);
		// Pixels 3 cm⁻¹ wide, so counts ∝ photon radiance: a flat response (C = 1) at 3000 K.
		const axis = Array.from({ length: 601 }, (_, i) => -900 + 3 * i);
		const counts = axis.map((s) => radiancePhotonWavenumber((nuL - s) * 100, 3000));
		const lamp = { shift: axis, counts };
		const at = (tc: number) => responseRatio(lampResponse(lamp, laserNm, tc), 520.7).c;
		const cal = lampCalibration({
			lamp,
			laserNm,
			colourTemperatureK: 2856,
			uColourTemperatureK: 50,
			modeCm1: 520.7,
			uRelative: 0.005
		});
		const numeric = Math.abs((at(2857) - at(2855)) / 2) * 50;
		expect(rel(cal.budget.colourTemperature!, numeric)).toBeLessThan(1e-3);
		expect(rel(cal.budget.curve, cal.c * Math.SQRT2 * 0.005)).toBeLessThan(1e-12);
		expect(rel(cal.u_c, Math.hypot(cal.budget.curve, cal.budget.colourTemperature!))).toBeLessThan(
			1e-12
		);
		// Lamp really at 3000 K read as 2856 K: C is off by the Planck ratio, not 1.
		expect(cal.c).not.toBeCloseTo(1, 2);
		expect(at(3000)).toBeCloseTo(1, 3);
	});
});

describe('lamp with a certified radiance table', () => {
	// The same synthetic lamp as above, seen through an invented falling response.
	const truth = (shift: number) => 0.6 + 0.3 * Math.cos((shift + 200) / 900) - 1e-4 * shift;
	const laserNm = 532;
	const tc = 2856; // CIE illuminant A's colour temperature (CIE 15, common practice)
	const nuL = laserWavenumber(laserNm);
	const axis = wavelengthUniformAxis(laserNm, -1200, 1200, 801);
	const counts = Array.from(axis, (s, i) => {
		const n = axis.length;
		const width =
			(axis[Math.min(i + 1, n - 1)] - axis[Math.max(i - 1, 0)]) / (i === 0 || i === n - 1 ? 1 : 2);
		return 1e-12 * truth(s) * radiancePhotonWavenumber((nuL - s) * 100, tc) * width * 100;
	});
	const lamp = { shift: axis, counts };
	// A certificate in energy radiance per wavelength every 0.5 nm, as Planck's law gives it
	// (in W m⁻² sr⁻¹ nm⁻¹; the unit drops out of C).
	const wavelengthNm = Array.from({ length: 401 }, (_, i) => 480 + 0.5 * i);
	const table = {
		wavelengthNm,
		radiance: wavelengthNm.map((nm) => radianceEnergyWavelength(nm * 1e-9, tc) * 1e-9)
	};

	it('gives the C of the colour-temperature route when the table is that blackbody', () => {
		// Source: Planck's law (CODATA h, c, k), already checked against Wien's b and σ above.
		const byTable = tableLampCalibration({
			lamp,
			laserNm,
			table,
			uTableRelative: 0.01,
			modeCm1: 520.7,
			uRelative: 0.005
		});
		const byTc = lampCalibration({
			lamp,
			laserNm,
			colourTemperatureK: tc,
			uColourTemperatureK: 0,
			modeCm1: 520.7,
			uRelative: 0.005
		});
		expect(rel(byTable.c, byTc.c)).toBeLessThan(1e-5);
		expect(rel(byTable.c, truth(-520.7) / truth(520.7))).toBeLessThan(1e-4);
		expect(rel(byTable.budget.radianceTable!, byTable.c * Math.SQRT2 * 0.01)).toBeLessThan(1e-12);
		expect(
			rel(byTable.u_c, Math.hypot(byTable.budget.curve, byTable.budget.radianceTable!))
		).toBeLessThan(1e-12);
	});

	it('refuses a lamp spectrum that reaches past the table, and a table out of order', () => {
		const short = {
			wavelengthNm: wavelengthNm.slice(0, 100),
			radiance: table.radiance.slice(0, 100)
		};
		expect(() =>
			tableLampCalibration({
				lamp,
				laserNm,
				table: short,
				uTableRelative: 0,
				modeCm1: 520.7,
				uRelative: 0
			})
		).toThrow(/outside the radiance table/);
		const shuffled = { wavelengthNm: [500, 490], radiance: [1, 1] };
		expect(() =>
			tableLampCalibration({
				lamp,
				laserNm,
				table: shuffled,
				uTableRelative: 0,
				modeCm1: 520.7,
				uRelative: 0
			})
		).toThrow(EngineError);
	});
});
