/**
 * Planck's law, and the relative spectral response it yields from a white-light lamp
 * (physics.md §1.3b). SI units throughout: wavelength in m, wavenumber in m⁻¹, temperature in K.
 * Radiances are per steradian; "energy" radiance is in W m⁻² sr⁻¹ per unit of the spectral
 * variable, "photon" radiance in photons s⁻¹ m⁻² sr⁻¹ per unit of it.
 *
 *   L_λ   = 2hc² λ⁻⁵ / (exp(c₂/(λT)) − 1)      L_p,λ = 2c λ⁻⁴ / (exp(c₂/(λT)) − 1)
 *   L_ν̃   = 2hc² ν̃³  / (exp(c₂ν̃/T) − 1)        L_p,ν̃ = 2c ν̃²  / (exp(c₂ν̃/T) − 1)
 */
import { BOLTZMANN_K, PLANCK_H, SPEED_OF_LIGHT_C, laserWavenumber } from './constants';
import { responseFactor } from './response';
import { EngineError } from './types';

/** c₂ = hc/k_B in m·K. */
const C2_M_K = (PLANCK_H * SPEED_OF_LIGHT_C) / BOLTZMANN_K;
/** 2hc², W m² sr⁻¹. */
const C1L = 2 * PLANCK_H * SPEED_OF_LIGHT_C * SPEED_OF_LIGHT_C;

function positive(what: string, x: number) {
	if (!(x > 0) || !Number.isFinite(x)) {
		throw new EngineError('bad-planck-input', `The ${what} must be a positive number (got ${x}).`);
	}
}

/** Energy spectral radiance per unit wavelength, W m⁻² sr⁻¹ m⁻¹. */
export function radianceEnergyWavelength(lambdaM: number, temperatureK: number): number {
	positive('wavelength', lambdaM);
	positive('temperature', temperatureK);
	// expm1 keeps the long-wavelength (Rayleigh–Jeans) end accurate.
	return C1L / lambdaM ** 5 / Math.expm1(C2_M_K / (lambdaM * temperatureK));
}

/** Energy spectral radiance per unit wavenumber, W m⁻² sr⁻¹ (m⁻¹)⁻¹. */
export function radianceEnergyWavenumber(nuM1: number, temperatureK: number): number {
	positive('wavenumber', nuM1);
	positive('temperature', temperatureK);
	return (C1L * nuM1 ** 3) / Math.expm1((C2_M_K * nuM1) / temperatureK);
}

/** Photon spectral radiance per unit wavelength, photons s⁻¹ m⁻² sr⁻¹ m⁻¹ (energy ÷ hc/λ). */
export function radiancePhotonWavelength(lambdaM: number, temperatureK: number): number {
	positive('wavelength', lambdaM);
	positive('temperature', temperatureK);
	return (2 * SPEED_OF_LIGHT_C) / lambdaM ** 4 / Math.expm1(C2_M_K / (lambdaM * temperatureK));
}

/** Photon spectral radiance per unit wavenumber, photons s⁻¹ m⁻² sr⁻¹ (m⁻¹)⁻¹ (energy ÷ hcν̃). */
export function radiancePhotonWavenumber(nuM1: number, temperatureK: number): number {
	positive('wavenumber', nuM1);
	positive('temperature', temperatureK);
	return (2 * SPEED_OF_LIGHT_C * nuM1 ** 2) / Math.expm1((C2_M_K * nuM1) / temperatureK);
}

export interface LampSpectrum {
	/** Raman shift of each pixel, cm⁻¹, strictly ascending (anti-Stokes side negative). */
	shift: ArrayLike<number>;
	/** Lamp counts (or count rate) per pixel, dark-subtracted. */
	counts: ArrayLike<number>;
}

export interface ResponseCurve {
	shift: number[];
	/** Relative response, counts per incident photon, scaled so that its largest value is 1. */
	response: number[];
}

/**
 * Relative response from a lamp seen through the instrument: counts per pixel ÷ (the lamp's
 * photon radiance per wavenumber × the pixel's width in wavenumber). Photon units because a CCD
 * counts photons, and the pixel width because a pixel's counts are an integral over it (pixels
 * uniform in wavelength are not uniform in shift). `photonRadiance` takes an absolute wavenumber
 * in m⁻¹; only its shape matters, since the curve is scaled to a largest value of 1.
 */
export function lampResponseWith(
	lamp: LampSpectrum,
	laserNm: number,
	photonRadiance: (nuM1: number) => number
): ResponseCurve {
	positive('laser wavelength', laserNm);
	const n = lamp.shift.length;
	if (n < 2 || lamp.counts.length !== n) {
		throw new EngineError(
			'bad-lamp',
			'The lamp spectrum needs at least two pixels, each with a shift and a count.'
		);
	}
	const nuL = laserWavenumber(laserNm);
	const shift: number[] = [];
	const raw: number[] = [];
	for (let i = 0; i < n; i++) {
		if (i > 0 && !(lamp.shift[i] > lamp.shift[i - 1])) {
			throw new EngineError(
				'bad-lamp',
				'The lamp spectrum’s shift axis must be strictly ascending.'
			);
		}
		const absCm1 = nuL - lamp.shift[i];
		if (!(absCm1 > 0)) {
			throw new EngineError(
				'bad-lamp',
				`A shift of ${lamp.shift[i]} cm⁻¹ lies beyond the laser line.`
			);
		}
		const lo = lamp.shift[Math.max(i - 1, 0)];
		const hi = lamp.shift[Math.min(i + 1, n - 1)];
		const widthCm1 = (hi - lo) / (i === 0 || i === n - 1 ? 1 : 2);
		const photons = photonRadiance(absCm1 * 100) * widthCm1 * 100;
		shift.push(lamp.shift[i]);
		raw.push(lamp.counts[i] / photons);
	}
	const top = Math.max(...raw);
	if (!(top > 0)) throw new EngineError('bad-lamp', 'The lamp spectrum has no positive counts.');
	return { shift, response: raw.map((r) => r / top) };
}

/** Relative response from a lamp of known colour temperature (a blackbody of that T). */
export function lampResponse(
	lamp: LampSpectrum,
	laserNm: number,
	colourTemperatureK: number
): ResponseCurve {
	positive('colour temperature', colourTemperatureK);
	return lampResponseWith(lamp, laserNm, (nu) => radiancePhotonWavenumber(nu, colourTemperatureK));
}

/**
 * A lamp's certified spectral radiance: energy radiance per unit wavelength at ascending
 * wavelengths (nm), in any one unit (only its shape is used), as calibration certificates give it.
 */
export interface RadianceTable {
	wavelengthNm: number[];
	radiance: number[];
}

/**
 * The table as photon radiance per wavenumber, linearly interpolated in wavelength:
 * L_p,ν̃ = L_p,λ·|dλ/dν̃| = (L_λ·λ/hc)·λ² = L_λ·λ³/(hc). Outside the table there is no value.
 */
export function photonRadianceFromTable(table: RadianceTable): (nuM1: number) => number {
	const { wavelengthNm: w, radiance: l } = table;
	if (w.length < 2 || l.length !== w.length) {
		throw new EngineError(
			'bad-radiance-table',
			'The radiance table needs at least two rows, each with a wavelength and a radiance.'
		);
	}
	for (let i = 0; i < w.length; i++) {
		if (i > 0 && !(w[i] > w[i - 1]))
			throw new EngineError(
				'bad-radiance-table',
				'The radiance table’s wavelengths must be strictly ascending.'
			);
		if (!(l[i] > 0) || !Number.isFinite(l[i]))
			throw new EngineError(
				'bad-radiance-table',
				`The radiance at ${w[i]} nm must be a positive number (got ${l[i]}).`
			);
	}
	return (nuM1: number) => {
		const nm = 1e9 / nuM1;
		if (nm < w[0] || nm > w[w.length - 1]) {
			throw new EngineError(
				'lamp-outside-table',
				`The lamp spectrum reaches ${nm.toFixed(1)} nm, outside the radiance table (${w[0]}–${w[w.length - 1]} nm); crop the lamp spectrum or use a wider table.`
			);
		}
		let hi = 1;
		while (w[hi] < nm) hi++;
		const f = (nm - w[hi - 1]) / (w[hi] - w[hi - 1]);
		const radiance = l[hi - 1] + f * (l[hi] - l[hi - 1]);
		const lambdaM = nm * 1e-9;
		return (radiance * lambdaM ** 3) / (PLANCK_H * SPEED_OF_LIGHT_C);
	};
}

/**
 * C = R(−ν̃m) / R(+ν̃m) read off a response curve, with u(C) from the curve's relative
 * uncertainty; the interpolation is the one every response curve goes through (response.ts).
 */
export function responseRatio(
	curve: ResponseCurve,
	modeCm1: number,
	uRelative = 0
): { c: number; u_c: number } {
	// Laser and exponent do not enter a curve's C; response.ts takes them for the other kinds.
	const f = responseFactor(
		{ kind: 'curve', shift: curve.shift, response: curve.response, u_relative: uRelative },
		Number.POSITIVE_INFINITY,
		modeCm1,
		3
	);
	return { c: f.c, u_c: f.u_c };
}

export interface LampCalibrationInput {
	lamp: LampSpectrum;
	laserNm: number;
	colourTemperatureK: number;
	/** Standard uncertainty of the colour temperature, K (a nominal lamp: tens of kelvin). */
	uColourTemperatureK: number;
	modeCm1: number;
	/** Relative standard uncertainty of each response value (lamp noise, flat-field), e.g. 0.01. */
	uRelative: number;
}

export interface LampCalibration {
	curve: ResponseCurve;
	c: number;
	u_c: number;
	/** Contributions to u(C): the curve's own scatter, and u(T_c) or the radiance table's u. */
	budget: { curve: number; colourTemperature?: number; radianceTable?: number };
}

/**
 * C from a lamp, with u(C) from the curve and from the colour temperature. C divides by the
 * photon radiance at ν̃L+ν̃m and multiplies by it at ν̃L−ν̃m, so with x = c₂ν̃/T_c and
 * ∂ln L_p,ν̃/∂T_c = (x/T_c)·eˣ/(eˣ−1):  ∂ln C/∂T_c = ∂ln L_p(ν̃S)/∂T_c − ∂ln L_p(ν̃AS)/∂T_c.
 */
export function lampCalibration(input: LampCalibrationInput): LampCalibration {
	const curve = lampResponse(input.lamp, input.laserNm, input.colourTemperatureK);
	const { c, u_c } = responseRatio(curve, input.modeCm1, input.uRelative);
	const t = input.colourTemperatureK;
	const nuL = laserWavenumber(input.laserNm) * 100;
	const dLn = (nuM1: number) => {
		const x = (C2_M_K * nuM1) / t;
		return (x / t) * (1 / -Math.expm1(-x));
	};
	const dLnC = dLn(nuL - input.modeCm1 * 100) - dLn(nuL + input.modeCm1 * 100);
	const fromT = Math.abs(c * dLnC) * input.uColourTemperatureK;
	return {
		curve,
		c,
		u_c: Math.hypot(u_c, fromT),
		budget: { curve: u_c, colourTemperature: fromT }
	};
}

export interface TableLampCalibrationInput {
	lamp: LampSpectrum;
	laserNm: number;
	table: RadianceTable;
	/** Relative standard uncertainty of the certified radiance, e.g. 0.01 for 1 %. */
	uTableRelative: number;
	modeCm1: number;
	uRelative: number;
}

/**
 * C from a lamp with a certified radiance table instead of a colour temperature. The table's
 * uncertainty enters C through the radiance at the two band wavelengths, taken as independent
 * (the certificate rarely states their correlation; independence is the larger u):
 * u_rel(C) from the table = √2 · u_rel(L).
 */
export function tableLampCalibration(input: TableLampCalibrationInput): LampCalibration {
	const curve = lampResponseWith(input.lamp, input.laserNm, photonRadianceFromTable(input.table));
	const { c, u_c } = responseRatio(curve, input.modeCm1, input.uRelative);
	const fromTable = c * Math.SQRT2 * input.uTableRelative;
	return {
		curve,
		c,
		u_c: Math.hypot(u_c, fromTable),
		budget: { curve: u_c, radianceTable: fromTable }
	};
}
