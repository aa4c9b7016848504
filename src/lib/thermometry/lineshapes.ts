/**
 * Band profiles, parametrised by AREA, centre and full width at half maximum (FWHM), because the
 * area is what the Boltzmann ratio is about: peak heights depend on resolution, areas do not.
 * Each profile has unit area; a band is area × profile. Derivatives are analytic so the fitter
 * never differentiates numerically.
 */
import type { Lineshape } from './types';

/** Numeric codes for the hot loop (a switch on a small integer is cheaper than on a string). */
export const LORENTZIAN = 0;
export const GAUSSIAN = 1;
export const PSEUDO_VOIGT = 2;
export type ShapeCode = 0 | 1 | 2;

export function shapeCode(shape: Lineshape): ShapeCode {
	return shape === 'lorentzian' ? LORENTZIAN : shape === 'gaussian' ? GAUSSIAN : PSEUDO_VOIGT;
}

const FOUR_LN2 = 4 * Math.LN2;
/** Unit-area Gaussian peak height × FWHM: √(4 ln 2 / π) ≈ 0.9394. */
const GAUSS_NORM = Math.sqrt(FOUR_LN2 / Math.PI);
/** Unit-area Lorentzian peak height × FWHM: 2/π. */
const LORENTZ_NORM = 2 / Math.PI;

/**
 * Unit-area profile at x. When `d` is given, writes ∂/∂centre to d[0], ∂/∂fwhm to d[1] and
 * ∂/∂eta to d[2] (zero unless pseudo-Voigt). `eta` is the Lorentzian fraction (0…1).
 */
export function profile(
	shape: ShapeCode,
	x: number,
	centre: number,
	fwhm: number,
	eta: number,
	d: Float64Array | null
): number {
	const u = (x - centre) / fwhm;
	let lor = 0;
	let gau = 0;
	let dlC = 0;
	let dlW = 0;
	let dgC = 0;
	let dgW = 0;
	if (shape !== GAUSSIAN) {
		// L = (2/πw)·q with q = 1/(1+4u²)
		const q = 1 / (1 + 4 * u * u);
		lor = (LORENTZ_NORM / fwhm) * q;
		if (d) {
			dlC = (lor * 8 * u * q) / fwhm;
			dlW = (lor / fwhm) * (8 * u * u * q - 1);
		}
	}
	if (shape !== LORENTZIAN) {
		// G = (√(4ln2/π)/w)·exp(−4 ln2 u²)
		gau = (GAUSS_NORM / fwhm) * Math.exp(-FOUR_LN2 * u * u);
		if (d) {
			dgC = (gau * 2 * FOUR_LN2 * u) / fwhm;
			dgW = (gau / fwhm) * (2 * FOUR_LN2 * u * u - 1);
		}
	}
	if (shape === LORENTZIAN) {
		if (d) {
			d[0] = dlC;
			d[1] = dlW;
			d[2] = 0;
		}
		return lor;
	}
	if (shape === GAUSSIAN) {
		if (d) {
			d[0] = dgC;
			d[1] = dgW;
			d[2] = 0;
		}
		return gau;
	}
	if (d) {
		d[0] = eta * dlC + (1 - eta) * dgC;
		d[1] = eta * dlW + (1 - eta) * dgW;
		d[2] = lor - gau;
	}
	return eta * lor + (1 - eta) * gau;
}

/** A band: area × unit profile, in the same units as area per cm⁻¹. */
export function band(
	shape: Lineshape,
	x: number,
	area: number,
	centre: number,
	fwhm: number,
	eta = 0.5
): number {
	return area * profile(shapeCode(shape), x, centre, fwhm, eta, null);
}

/** Peak height of a band of given area (the profile at its centre). */
export function peakHeight(shape: Lineshape, area: number, fwhm: number, eta = 0.5): number {
	const lor = LORENTZ_NORM / fwhm;
	const gau = GAUSS_NORM / fwhm;
	const h = shape === 'lorentzian' ? lor : shape === 'gaussian' ? gau : eta * lor + (1 - eta) * gau;
	return area * h;
}

/** Area of a band with given height: the inverse of `peakHeight`, used for starting values. */
export function areaFromHeight(shape: Lineshape, height: number, fwhm: number, eta = 0.5): number {
	return height / peakHeight(shape, 1, fwhm, eta);
}
