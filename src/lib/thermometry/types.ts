/**
 * The engine's shared vocabulary. Parsing and preparation produce `PreparedWindow`s; the
 * estimator turns them into a `Reading`. The JSON field names of `Reading` are the product's
 * public names: the command line, the API and the database all use them unchanged.
 */

export type Side = 'stokes' | 'anti-stokes';
export type Lineshape = 'lorentzian' | 'gaussian' | 'pseudo-voigt';
export type Detector = 'photon-counting' | 'energy';
export type Severity = 'info' | 'warning' | 'error';

/** One spectral window on the Raman-shift axis, ready to fit. */
export interface PreparedWindow {
	side: Side;
	/** Source name for messages (file name or "combined"). */
	source: string;
	/** Raman shift in cm⁻¹, strictly ascending; anti-Stokes shifts are negative. */
	shift: Float64Array;
	/**
	 * Signal in counts per second PER PIXEL (not per cm⁻¹), dark-subtracted, not
	 * baseline-subtracted. The estimator accounts for each pixel's width in cm⁻¹.
	 */
	rate: Float64Array;
	/** Variance of `rate` in (counts/s)²: Poisson from the raw counts plus the dark's own. */
	variance: Float64Array;
	/** 1 where a point may be fitted, 0 where it was a removed spike or is saturated. */
	usable: Uint8Array;
	/** Exposure used to turn counts into rates, in seconds. */
	exposureS: number;
	/** Spikes removed in preparation. */
	spikesRemoved: number;
	/** Indices of points at the detector ceiling (before masking). */
	saturatedPoints: number;
}

export interface Flag {
	/** Stable machine code, e.g. `weak-anti-stokes`. */
	code: string;
	severity: Severity;
	/** One sentence for a person. */
	message: string;
	/** The mode the flag concerns, in cm⁻¹, when it concerns one. */
	mode_cm1?: number;
}

/** How the anti-Stokes/Stokes response ratio C is known. */
export type ResponseSource =
	| { kind: 'constant'; c: number; u_c: number }
	| {
			kind: 'curve';
			/** Relative response R(shift) sampled on ascending shifts (cm⁻¹, both signs). */
			shift: number[];
			response: number[];
			/** Relative standard uncertainty of each R value (e.g. 0.01 for 1 %). */
			u_relative: number;
	  }
	| {
			kind: 'reference';
			/** Fitted anti-Stokes/Stokes area ratio of the reference pair, with its u. */
			ratio: number;
			u_ratio: number;
			t0_k: number;
			u_t0_k: number;
	  };

export interface BudgetRow {
	/**
	 * Stable key: `ratio`, `area_stokes`, `area_anti_stokes`, `c_factor`, `mode_shift`,
	 * `laser_wavenumber`, `t0`, `reference_ratio`. In the budget of a multi-mode mean, inputs
	 * that belong to one mode carry it as a suffix, e.g. `ratio@520.7`.
	 */
	input: string;
	/** For a person, e.g. "Response ratio C". */
	label: string;
	value: number;
	unit: string;
	standard_uncertainty: number;
	/** ∂T/∂x_i in K per unit of the input. */
	sensitivity: number;
	/** |c_i|·u(x_i) in K. */
	contribution_k: number;
	/** Share of u_c²(T), 0…1. */
	variance_share: number;
}

export interface FittedBand {
	side: Side;
	/** Centre on the Raman-shift axis (negative for anti-Stokes), cm⁻¹. */
	center_cm1: number;
	u_center_cm1: number;
	fwhm_cm1: number;
	u_fwhm_cm1: number;
	/**
	 * Band area in counts/s: the band's photon rate summed over pixels (per-pixel rate integrated
	 * with each pixel's width), so it does not depend on the pixel width of the window.
	 */
	area: number;
	u_area: number;
	height: number;
	/** Pseudo-Voigt Lorentzian fraction (0 Gaussian … 1 Lorentzian) when fitted. */
	eta?: number;
	/** Local linear baseline under the band: a + b·(shift − center). */
	baseline: { a: number; b: number };
	reduced_chi2: number;
	points: number;
}

export interface ModeResult {
	/** Nominal mode shift asked for, cm⁻¹. */
	mode_cm1: number;
	/** Fitted |shift| of the band, cm⁻¹. */
	shift_cm1: number;
	u_shift_cm1: number;
	temperature_k: number | null;
	u_temperature_k: number | null;
	/** Axis offset common to both windows (laser line off zero), cm⁻¹, from the joint fit. */
	axis_offset_cm1?: number;
	u_axis_offset_cm1?: number;
	/** The joint-fit estimate, always computed (also when the separate method was asked for). */
	joint?: {
		temperature_k: number;
		u_temperature_k: number;
		/** u(T) from the fit's covariance alone (counting statistics). */
		u_statistical_k: number;
		ratio: number;
		u_ratio: number;
		converged: boolean;
		iterations: number;
	};
	/** Peak-shift thermometry cross-check from the Stokes band position, when a model was given. */
	peak_shift?: { temperature_k: number; u_temperature_k: number; model: string };
	stokes: FittedBand;
	anti_stokes: FittedBand;
	/** The separate-band ratio estimate, reported as a cross-check. */
	separate?: { temperature_k: number; u_temperature_k: number; ratio: number; u_ratio: number };
	budget: BudgetRow[];
	reduced_chi2: number;
}

export interface MonteCarloResult {
	trials: number;
	seed: number;
	mean_k: number;
	sd_k: number;
	/** Shortest 95 % coverage interval, K. */
	interval_95_k: [number, number];
	/** Histogram for plots: bin edges (length bins+1) and counts. */
	histogram: { edges: number[]; counts: number[] };
	/** Trials whose inputs gave no physical temperature (left out of the summary). */
	invalid_trials?: number;
}

export interface Reading {
	engine_version: string;
	/** The estimator used, e.g. `joint-fit` or `separate-bands`. */
	method: string;
	exponent: 3 | 4;
	lineshape: Lineshape;
	laser_nm: number;
	/** null when the data cannot support a temperature; `flags` then says why. */
	temperature_k: number | null;
	u_temperature_k: number | null;
	expanded_uncertainty_k: number | null;
	coverage_factor: number;
	modes: ModeResult[];
	/** Budget of the reported temperature (the single mode's, or the weighted mean's). */
	budget: BudgetRow[];
	/** Birge ratio of the modes when there are several. */
	birge_ratio?: number;
	flags: Flag[];
	monte_carlo?: MonteCarloResult;
	spikes_removed: number;
}

/** An input the engine refuses. `code` is stable; `message` names the file, row and problem. */
export class EngineError extends Error {
	constructor(
		readonly code: string,
		message: string,
		readonly details: { file?: string; row?: number } = {}
	) {
		super(message);
		this.name = 'EngineError';
	}
}
