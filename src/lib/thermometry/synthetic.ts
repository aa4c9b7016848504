/**
 * Realistic synthetic Stokes/anti-Stokes pairs with a known temperature, for round-trip tests,
 * fixtures and the benchmark. Counts are drawn with seeded Poisson noise on an axis that is
 * uniform in WAVELENGTH (as a grating spectrometer's pixels are), so the two windows have
 * different pixel widths in cm⁻¹, exactly as on a real instrument. All numbers here are invented.
 */
import { C2_CM_K, laserWavenumber } from './constants';
import { profile, shapeCode } from './lineshapes';
import { createRng, type Rng } from './random';
import type { Lineshape, PreparedWindow, Side } from './types';

export interface SyntheticSpec {
	laserNm: number;
	/** True band |shift| in the spectrum, cm⁻¹. */
	modeCm1: number;
	temperatureK: number;
	exponent: 3 | 4;
	lineshape: Lineshape;
	fwhmCm1: number;
	eta?: number;
	/** True response ratio C built into the data (default 1). */
	c?: number;
	/** Expected total Stokes band counts in one exposure. */
	stokesCounts: number;
	exposureS?: { stokes: number; antiStokes: number };
	/**
	 * Window half-range around ±centre (the mode unless given) and number of pixels per window.
	 * Pairs of different modes on one centre share their axes, so their counts add up to one
	 * spectrum with several bands.
	 */
	window?: { halfRangeCm1?: number; points?: number; centreCm1?: number };
	/**
	 * Fluorescence/background in counts per pixel per exposure at the band position, its linear
	 * slope (fraction per cm⁻¹) and curvature (fraction per cm⁻², a parabola). The anti-Stokes side
	 * gets `antiStokesFraction` of it (fluorescence sits mainly on the Stokes side).
	 */
	baseline?: { level: number; slope?: number; curvature?: number; antiStokesFraction?: number };
	/** Cosmic-ray spikes per window (single pixels, marked unusable in the prepared window). */
	spikes?: number;
	/** Laser line off zero on the shift axis: both bands appear at ±mode + offset. */
	axisOffsetCm1?: number;
	/** Detector dark level per pixel per exposure (subtracted again in the prepared window). */
	darkCounts?: number;
	seed?: number;
}

export interface SyntheticWindow {
	prepared: PreparedWindow;
	/** Raw per-pixel counts on the axis, including dark and spikes. */
	raw: { shift: Float64Array; wavelengthNm: Float64Array; counts: Float64Array };
}

export interface SyntheticPair {
	stokes: SyntheticWindow;
	antiStokes: SyntheticWindow;
	truth: { ratio: number; stokesArea: number; antiStokesArea: number; temperatureK: number };
}

/** Shift axis (ascending) of `points` pixels uniform in wavelength between two shifts. */
export function wavelengthUniformAxis(
	laserNm: number,
	fromCm1: number,
	toCm1: number,
	points: number
): Float64Array {
	const nuL = laserWavenumber(laserNm);
	const l0 = 1e7 / (nuL - fromCm1);
	const l1 = 1e7 / (nuL - toCm1);
	const out = new Float64Array(points);
	for (let i = 0; i < points; i++) out[i] = nuL - 1e7 / (l0 + ((l1 - l0) * i) / (points - 1));
	return out;
}

/** True band areas (counts/s) of the spec: Stokes and C ρⁿ e^(−c₂ν/T) times it. */
export function trueAreas(spec: SyntheticSpec): {
	stokes: number;
	antiStokes: number;
	ratio: number;
} {
	const nuL = laserWavenumber(spec.laserNm);
	const rho = (nuL + spec.modeCm1) / (nuL - spec.modeCm1);
	const ratio =
		(spec.c ?? 1) * rho ** spec.exponent * Math.exp((-C2_CM_K * spec.modeCm1) / spec.temperatureK);
	const stokes = spec.stokesCounts / (spec.exposureS?.stokes ?? 1);
	return { stokes, antiStokes: stokes * ratio, ratio };
}

/** Expected (noise-free) raw counts per pixel on a given axis for one side, dark included. */
export function expectedCounts(axis: Float64Array, side: Side, spec: SyntheticSpec): Float64Array {
	const areas = trueAreas(spec);
	const st = side === 'stokes';
	const t = st ? (spec.exposureS?.stokes ?? 1) : (spec.exposureS?.antiStokes ?? 1);
	const area = st ? areas.stokes : areas.antiStokes;
	const centre = (st ? spec.modeCm1 : -spec.modeCm1) + (spec.axisOffsetCm1 ?? 0);
	const code = shapeCode(spec.lineshape);
	const bl = spec.baseline;
	const level = bl ? bl.level * (st ? 1 : (bl.antiStokesFraction ?? 0.1)) : 0;
	const n = axis.length;
	const out = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		const dx =
			(axis[Math.min(i + 1, n - 1)] - axis[Math.max(i - 1, 0)]) / (i === 0 || i === n - 1 ? 1 : 2);
		const g = profile(code, axis[i], centre, spec.fwhmCm1, spec.eta ?? 0.5, null) * dx;
		const r = axis[i] - centre;
		const background = level * (1 + (bl?.slope ?? 0) * r + (bl?.curvature ?? 0) * r * r);
		out[i] = t * area * g + Math.max(background, 0) + (spec.darkCounts ?? 0);
	}
	return out;
}

/** Poisson counts on a given axis (the function a fixture writer or benchmark reuses). */
export function syntheticCounts(
	axis: Float64Array,
	side: Side,
	spec: SyntheticSpec,
	rng: Rng
): Float64Array {
	const mu = expectedCounts(axis, side, spec);
	for (let i = 0; i < mu.length; i++) mu[i] = rng.poisson(mu[i]);
	return mu;
}

function makeWindow(side: Side, spec: SyntheticSpec, rng: Rng): SyntheticWindow {
	const st = side === 'stokes';
	const half = spec.window?.halfRangeCm1 ?? 250;
	const points = spec.window?.points ?? 2000;
	const m = spec.window?.centreCm1 ?? spec.modeCm1;
	const shift = st
		? wavelengthUniformAxis(spec.laserNm, Math.max(m - half, 1), m + half, points)
		: wavelengthUniformAxis(spec.laserNm, -m - half, Math.min(-m + half, -1), points);
	const counts = syntheticCounts(shift, side, spec, rng);
	const usable = new Uint8Array(points).fill(1);
	let spikes = 0;
	for (let s = 0; s < (spec.spikes ?? 0); s++) {
		const i = Math.floor(rng.uniform() * points);
		if (!usable[i]) continue;
		counts[i] += 200 + 2000 * rng.uniform();
		usable[i] = 0;
		spikes++;
	}
	const t = st ? (spec.exposureS?.stokes ?? 1) : (spec.exposureS?.antiStokes ?? 1);
	const dark = spec.darkCounts ?? 0;
	const rate = new Float64Array(points);
	const variance = new Float64Array(points);
	for (let i = 0; i < points; i++) {
		rate[i] = (counts[i] - dark) / t;
		// A constant dark level is exact, so only the raw counts' own shot noise remains.
		variance[i] = counts[i] / (t * t);
	}
	const nuL = laserWavenumber(spec.laserNm);
	const wavelengthNm = shift.map((s) => 1e7 / (nuL - s));
	return {
		prepared: {
			side,
			source: `synthetic-${side}`,
			shift,
			rate,
			variance,
			usable,
			exposureS: t,
			spikesRemoved: spikes,
			saturatedPoints: 0
		},
		raw: { shift, wavelengthNm, counts }
	};
}

export function syntheticPair(spec: SyntheticSpec): SyntheticPair {
	const rng = createRng(spec.seed ?? 1);
	const stokes = makeWindow('stokes', spec, rng);
	const antiStokes = makeWindow('anti-stokes', spec, rng);
	const a = trueAreas(spec);
	return {
		stokes,
		antiStokes,
		truth: {
			ratio: a.ratio,
			stokesArea: a.stokes,
			antiStokesArea: a.antiStokes,
			temperatureK: spec.temperatureK
		}
	};
}

/** Band positions and widths close to physics.md §4; exact values do not matter for a round trip. */
export const SYNTHETIC_MATERIALS = [
	{ name: 'Si', mode: 520.7, fwhm: 3.5 },
	{ name: 'Ge', mode: 300.7, fwhm: 5.3 },
	{ name: 'diamond', mode: 1332.5, fwhm: 2.2 },
	{ name: 'GaN E2(high)', mode: 567.6, fwhm: 4 },
	{ name: 'sapphire A1g', mode: 418, fwhm: 3 },
	{ name: 'anatase Eg', mode: 144, fwhm: 9 }
];
const SYNTHETIC_LASERS = [488, 532, 633, 785];
const SYNTHETIC_SHAPES: Lineshape[] = ['lorentzian', 'gaussian', 'pseudo-voigt'];

/**
 * A random but realistic case (seeded by i): material, laser, T in 200–1200 K, lineshape,
 * exponent, C, 3·10³–10⁵ anti-Stokes counts, background, spikes, axis offset, dark level.
 */
export function randomSyntheticSpec(i: number): SyntheticSpec {
	const r = createRng(1000 + i);
	const m = SYNTHETIC_MATERIALS[i % SYNTHETIC_MATERIALS.length];
	const laserNm = SYNTHETIC_LASERS[Math.floor(r.uniform() * SYNTHETIC_LASERS.length)];
	const temperatureK = 200 + 1000 * r.uniform();
	const lineshape = SYNTHETIC_SHAPES[Math.floor(r.uniform() * 3)];
	const exponent = r.uniform() < 0.8 ? 3 : 4;
	const c = 0.7 + 0.6 * r.uniform();
	// Enough anti-Stokes counts to measure: 3·10³ … 10⁵, log-uniform.
	const nAs = Math.exp(Math.log(3e3) + r.uniform() * Math.log(1e5 / 3e3));
	const probe: SyntheticSpec = {
		laserNm,
		modeCm1: m.mode,
		temperatureK,
		exponent,
		lineshape,
		fwhmCm1: m.fwhm,
		c,
		stokesCounts: 1
	};
	const ratio = trueAreas(probe).ratio;
	const kind = Math.floor(r.uniform() * 3);
	const exposureS = { stokes: 1 + 9 * r.uniform(), antiStokes: 1 + 29 * r.uniform() };
	// Stokes counts such that the anti-Stokes exposure collects nAs counts.
	const stokesCounts = Math.max(((nAs / ratio) * exposureS.stokes) / exposureS.antiStokes, 1e4);
	const level = ((0.02 + 0.3 * r.uniform()) * stokesCounts) / 30; // background vs Stokes peak counts
	return {
		...probe,
		eta: 0.2 + 0.6 * r.uniform(),
		stokesCounts,
		exposureS,
		window: { halfRangeCm1: Math.min(150, m.mode - 20), points: 2000 },
		baseline:
			kind === 0
				? undefined
				: {
						level,
						slope: (r.uniform() - 0.5) * 2e-3,
						curvature: kind === 2 ? 2e-6 : 0,
						antiStokesFraction: 0.05
					},
		spikes: Math.floor(r.uniform() * 6),
		axisOffsetCm1: (r.uniform() - 0.5) * 6,
		darkCounts: r.uniform() < 0.5 ? 0 : 300,
		seed: 5000 + i
	};
}
