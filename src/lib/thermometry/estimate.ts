/**
 * The estimator's entry point: a prepared Stokes/anti-Stokes pair in, a Reading out.
 *
 * For each mode: fit each band on its own (the separate-band ratio method, always computed as a
 * cross-check), then fit both windows jointly with T as a parameter (the default), build the GUM
 * budget, and flag whatever a practitioner should know. Several modes are combined by
 * modes.ts; Monte Carlo (JCGM 101) is run on request.
 */
import { combine, expanded, type BudgetInput } from './budget';
import { fitBand, lowerBound, reweight, type BandFitResult } from './band-fit';
import { ENGINE_VERSION, laserWavenumber } from './constants';
import { hasError, makeFlag } from './flags';
import { jointFit } from './joint-fit';
import { weightedMean } from './modes';
import { propagate, type Distribution } from './monte-carlo';
import { peakShiftTemperature, type PeakShiftModel } from './peak-shift';
import { responseFactor, type ResponseFactor } from './response';
import { chi2Tail } from './statistics';
import {
	referenceSensitivities,
	sensitivities,
	temperatureFromRatio,
	temperatureFromReference
} from './temperature';
import {
	EngineError,
	type BudgetRow,
	type Flag,
	type Lineshape,
	type ModeResult,
	type MonteCarloResult,
	type PreparedWindow,
	type Reading,
	type ResponseSource
} from './types';

export interface EstimateOptions {
	laserNm: number;
	modes: number[];
	exponent: 3 | 4;
	lineshape: Lineshape;
	/** One calibration for all modes, or one per mode (a reference run gives one ratio per mode). */
	response: ResponseSource | ResponseSource[];
	coverageFactor?: number;
	monteCarlo?: { trials: number; seed?: number };
	filterCutoffCm1?: number;
	/** Standard uncertainty of the shift-axis calibration at the mode, cm⁻¹ (default 0). */
	uModeCm1?: number;
	/** Standard uncertainty of the laser wavenumber, cm⁻¹ (default 0). */
	uLaserCm1?: number;
	method?: 'joint-fit' | 'separate-bands';
	/** Peak-shift thermometry cross-check from the Stokes band position (one model for all modes). */
	peakShift?: PeakShiftModel;
}

/** Everything needed to re-evaluate one mode's temperature from its inputs (budget, Monte Carlo). */
interface ModeModel {
	kind: 'direct' | 'reference';
	method: 'joint-fit' | 'separate-bands';
	inputs: { key: string; value: number; u: number }[];
	/** T from input values in the order of `inputs`. */
	evaluate(x: ArrayLike<number>): number;
}

const SEARCH_CM1 = 25;

function windowCovers(w: PreparedWindow, centre: number, half: number): number {
	let n = 0;
	const s = w.shift;
	for (let i = lowerBound(s, centre - half); i < s.length && s[i] <= centre + half; i++) {
		if (w.usable[i]) n++;
	}
	return n;
}

function checkInputs(
	stokes: PreparedWindow,
	antiStokes: PreparedWindow,
	mode: number,
	opts: EstimateOptions
): void {
	const nuL = laserWavenumber(opts.laserNm);
	if (!(opts.laserNm > 0) || !(nuL > mode)) {
		throw new EngineError(
			'laser-below-mode',
			`The laser at ${opts.laserNm} nm (${nuL.toFixed(1)} cm⁻¹) is not above the mode at ${mode} cm⁻¹, so no Stokes band exists.`
		);
	}
	if (!(mode > 0))
		throw new EngineError(
			'bad-mode',
			`The mode must be a positive Raman shift in cm⁻¹ (got ${mode}).`
		);
	const cut = opts.filterCutoffCm1 ?? 0;
	if (mode <= cut) {
		throw new EngineError(
			'no-data-at-band',
			`The mode at ${mode} cm⁻¹ lies inside the filter cut-off (${cut} cm⁻¹): the filter removes the band.`
		);
	}
	for (const [w, centre] of [
		[stokes, mode],
		[antiStokes, -mode]
	] as const) {
		if (windowCovers(w, centre, 10) < 5) {
			const lo = w.shift[0];
			const hi = w.shift[w.shift.length - 1];
			throw new EngineError(
				'no-data-at-band',
				`${w.source}: no data at the ${w.side} band near ${centre} cm⁻¹ (the window covers ${lo?.toFixed(1)}…${hi?.toFixed(1)} cm⁻¹).`,
				{ file: w.source }
			);
		}
	}
}

/** Budget inputs of one mode; shared between the joint and separate estimates except for the ratio part. */
function modeModel(
	method: 'joint-fit' | 'separate-bands',
	resp: ResponseFactor,
	nuL: number,
	shift: number,
	exponent: 3 | 4,
	ratioPart: { key: string; value: number; u: number }[],
	opts: EstimateOptions
): ModeModel {
	const ratioOf = (x: ArrayLike<number>) => (method === 'joint-fit' ? x[0] : x[1] / x[0]);
	const np = ratioPart.length;
	if (resp.kind === 'reference' && resp.reference) {
		const ref = resp.reference;
		return {
			kind: 'reference',
			method,
			inputs: [
				...ratioPart,
				{ key: 'reference_ratio', value: ref.ratio, u: ref.u_ratio },
				{ key: 't0', value: ref.t0_k, u: ref.u_t0_k },
				{ key: 'mode_shift', value: shift, u: opts.uModeCm1 ?? 0 }
			],
			evaluate: (x) => temperatureFromReference(ratioOf(x), x[np], x[np + 1], x[np + 2])
		};
	}
	return {
		kind: 'direct',
		method,
		inputs: [
			...ratioPart,
			{ key: 'c_factor', value: resp.c, u: resp.u_c },
			{ key: 'mode_shift', value: shift, u: opts.uModeCm1 ?? 0 },
			{ key: 'laser_wavenumber', value: nuL, u: opts.uLaserCm1 ?? 0 }
		],
		evaluate: (x) =>
			temperatureFromRatio(ratioOf(x), {
				c: x[np],
				modeCm1: x[np + 1],
				laserCm1: x[np + 2],
				exponent
			})
	};
}

const LABELS: Record<string, [string, string]> = {
	ratio: ['Fitted anti-Stokes/Stokes area ratio R', '1'],
	area_stokes: ['Stokes band area', 'counts/s'],
	area_anti_stokes: ['Anti-Stokes band area', 'counts/s'],
	c_factor: ['Response ratio C', '1'],
	reference_ratio: ['Reference-run ratio R₀', '1'],
	t0: ['Reference temperature T₀', 'K'],
	mode_shift: ['Mode shift ν̃m', 'cm⁻¹'],
	laser_wavenumber: ['Laser wavenumber ν̃L', 'cm⁻¹']
};

/** GUM budget at the solution T: analytic sensitivity coefficients (physics.md §2.1, §1.3a). */
function budgetOf(m: ModeModel, t: number, exponent: 3 | 4): { rows: BudgetRow[]; u: number } {
	const v = (k: string) => m.inputs.find((i) => i.key === k)!.value;
	const sens: Record<string, number> = {};
	const r = m.method === 'joint-fit' ? v('ratio') : v('area_anti_stokes') / v('area_stokes');
	if (m.kind === 'reference') {
		const s = referenceSensitivities(t, r, v('reference_ratio'), v('t0'), v('mode_shift'));
		Object.assign(sens, { ratio: s.ratio, reference_ratio: s.r0, t0: s.t0, mode_shift: s.mode });
	} else {
		const s = sensitivities(t, r, {
			c: v('c_factor'),
			modeCm1: v('mode_shift'),
			laserCm1: v('laser_wavenumber'),
			exponent
		});
		Object.assign(sens, {
			ratio: s.ratio,
			c_factor: s.c,
			mode_shift: s.mode,
			laser_wavenumber: s.laser
		});
	}
	if (m.method === 'separate-bands') {
		// R = A_AS/A_S ⇒ ∂T/∂A_S = −(K/R)·R/A_S, ∂T/∂A_AS = +(K/R)·R/A_AS
		sens.area_stokes = -sens.ratio * (r / v('area_stokes'));
		sens.area_anti_stokes = sens.ratio * (r / v('area_anti_stokes'));
	}
	const inputs: BudgetInput[] = m.inputs.map((i) => ({
		input: i.key,
		label: LABELS[i.key][0],
		unit: LABELS[i.key][1],
		value: i.value,
		standard_uncertainty: i.u,
		sensitivity: sens[i.key]
	}));
	const b = combine(inputs);
	return { rows: b.rows, u: b.u_c };
}

interface ModeOutcome {
	result: ModeResult;
	model: ModeModel | null;
	flags: Flag[];
}

function analyseMode(
	stokes: PreparedWindow,
	antiStokes: PreparedWindow,
	mode: number,
	source: ResponseSource,
	opts: EstimateOptions
): ModeOutcome {
	const flags: Flag[] = [];
	const nuL = laserWavenumber(opts.laserNm);
	const n = opts.exponent;
	const method = opts.method ?? 'joint-fit';
	const resp = responseFactor(source, nuL, mode, n);

	// 1. Each band on its own: the Stokes band, then the anti-Stokes band where it stands out.
	const s = fitBand(stokes, {
		lineshape: opts.lineshape,
		expectedCentre: mode,
		searchCm1: SEARCH_CM1
	});
	const shape = { centre: -s.band.center_cm1, fwhm: s.band.fwhm_cm1, eta: s.band.eta ?? 0.5 };
	let as: BandFitResult = fitBand(antiStokes, {
		lineshape: opts.lineshape,
		expectedCentre: shape.centre,
		searchCm1: 2 * shape.fwhm + 8
	});
	const sane =
		as.converged &&
		as.band.area > 10 * as.band.u_area &&
		as.band.fwhm_cm1 > 0.5 * shape.fwhm &&
		as.band.fwhm_cm1 < 2 * shape.fwhm;
	let shapeFixed = false;
	let offsetGuess: number;
	if (sane) {
		offsetGuess = (s.band.center_cm1 + as.band.center_cm1) / 2;
	} else {
		// Too weak to fit its own shape: take the Stokes shape, at the position the free fit
		// suggests when it found something there (the laser line may be off zero).
		const found =
			as.converged &&
			as.band.area > 3 * as.band.u_area &&
			Math.abs(as.band.center_cm1 - shape.centre) < shape.fwhm + 8;
		offsetGuess = found ? (s.band.center_cm1 + as.band.center_cm1) / 2 : 0;
		as = fitBand(antiStokes, {
			lineshape: opts.lineshape,
			expectedCentre: shape.centre,
			fixShape: { ...shape, centre: shape.centre + 2 * offsetGuess }
		});
		shapeFixed = true;
	}
	const shiftGuess = s.band.center_cm1 - offsetGuess;
	const ratioGuess = as.band.area / s.band.area;
	const tGuess =
		resp.kind === 'reference' && resp.reference
			? temperatureFromReference(ratioGuess, resp.reference.ratio, resp.reference.t0_k, shiftGuess)
			: temperatureFromRatio(ratioGuess, {
					c: resp.c,
					modeCm1: shiftGuess,
					laserCm1: nuL,
					exponent: n
				});

	// 2. The joint fit, started from the separate fits and weighted by their converged models'
	// Poisson variances: one pass already sits at the likelihood's fixed point (the joint and
	// separate models predict the same rates to well within their noise), so no second pass.
	reweight(s.region, s.model);
	reweight(as.region, as.model);
	const j = jointFit({
		reweightPasses: 0,
		stokes: s.region,
		antiStokes: as.region,
		lineshape: opts.lineshape,
		laserCm1: nuL,
		exponent: n,
		factor:
			resp.kind === 'reference' && resp.reference
				? { kind: 'reference', r0: resp.reference.ratio, t0: resp.reference.t0_k }
				: { kind: 'direct', c: resp.c },
		start: {
			stokesArea: s.band.area,
			temperatureK: Number.isFinite(tGuess) ? tGuess : 300,
			shiftCm1: shiftGuess,
			fwhmCm1: s.band.fwhm_cm1,
			offsetCm1: offsetGuess,
			eta: s.band.eta ?? 0.5,
			stokesBaseline: s.band.baseline,
			antiStokesBaseline: as.band.baseline
		}
	});
	if (shapeFixed) {
		// The separate estimate of a weak band: its area with the shape both bands share.
		as = fitBand(antiStokes, {
			lineshape: opts.lineshape,
			expectedCentre: j.antiStokes.center_cm1,
			fixShape: {
				centre: j.antiStokes.center_cm1,
				fwhm: j.antiStokes.fwhm_cm1,
				eta: j.antiStokes.eta ?? 0.5
			},
			region: { lo: as.lo, hi: as.hi }
		});
	}
	const sepShift = shapeFixed ? j.shiftCm1 : (s.band.center_cm1 - as.band.center_cm1) / 2;
	const sepModel = modeModel(
		'separate-bands',
		resp,
		nuL,
		sepShift,
		n,
		[
			{ key: 'area_stokes', value: s.band.area, u: s.band.u_area },
			{ key: 'area_anti_stokes', value: as.band.area, u: as.band.u_area }
		],
		opts
	);
	const tSep = sepModel.evaluate(sepModel.inputs.map((i) => i.value));
	const sepBudget = Number.isFinite(tSep) ? budgetOf(sepModel, tSep, n) : null;
	const ratioSep = as.band.area / s.band.area;
	const uRatioSep =
		Math.abs(ratioSep) * Math.hypot(s.band.u_area / s.band.area, as.band.u_area / as.band.area);

	const jointModel = modeModel(
		'joint-fit',
		resp,
		nuL,
		j.shiftCm1,
		n,
		[{ key: 'ratio', value: j.ratio, u: j.uRatio }],
		opts
	);
	const jointBudget = budgetOf(jointModel, j.temperatureK, n);

	// 3. Flags.
	const snrS =
		method === 'joint-fit' ? j.stokes.area / j.stokes.u_area : s.band.area / s.band.u_area;
	const snrAS = j.antiStokes.area / j.antiStokes.u_area;
	if (!(snrS >= 5))
		flags.push(makeFlag('no-stokes-signal', `Stokes area/u = ${snrS.toFixed(1)}.`, mode));
	if (!(snrAS >= 3)) {
		flags.push(
			makeFlag('no-anti-stokes-signal', `Anti-Stokes area/u = ${snrAS.toFixed(1)}.`, mode)
		);
	} else if (snrAS < 10) {
		flags.push(makeFlag('weak-anti-stokes', `Anti-Stokes area/u = ${snrAS.toFixed(1)}.`, mode));
	}
	if (j.fit.reason === 'singular' || !Number.isFinite(j.uTemperatureK)) {
		flags.push(
			makeFlag('fit-not-converged', 'The joint fit has no covariance at its solution.', mode)
		);
	}
	if (j.atBound || !Number.isFinite(j.temperatureK)) {
		flags.push(
			makeFlag(
				'implausible-temperature',
				`The fitted temperature ran to a bound (${j.temperatureK.toFixed(0)} K).`,
				mode
			)
		);
	} else if (j.temperatureK < 10 || j.temperatureK > 3000) {
		flags.push(makeFlag('unusual-temperature', `${j.temperatureK.toFixed(0)} K.`, mode));
	}
	const p = chi2Tail(j.fit.chi2, j.fit.dof);
	if (p < 1e-4 && j.reducedChi2 > 1.2) {
		flags.push(
			makeFlag(
				'poor-fit',
				`Reduced χ² = ${j.reducedChi2.toFixed(2)} over ${j.fit.dof} degrees of freedom.`,
				mode
			)
		);
	}
	for (const r of [s.region, as.region]) {
		if (r.n < 15)
			flags.push(makeFlag('few-points', `${r.n} points in the ${r.side} band region.`, mode));
	}
	const cut = opts.filterCutoffCm1;
	if (cut !== undefined && j.shiftCm1 - 4 * j.stokes.fwhm_cm1 < cut) {
		flags.push(
			makeFlag(
				'near-filter-cutoff',
				`Band at ${j.shiftCm1.toFixed(1)} cm⁻¹, cut-off at ${cut} cm⁻¹.`,
				mode
			)
		);
	}
	if (Math.abs(j.offsetCm1) > Math.max(1, 3 * j.uOffsetCm1)) {
		flags.push(
			makeFlag(
				'axis-offset',
				`Offset ${j.offsetCm1.toFixed(2)} ± ${j.uOffsetCm1.toFixed(2)} cm⁻¹.`,
				mode
			)
		);
	}
	if (Math.abs(j.uRatio / j.ratio) > 0.1) {
		flags.push(
			makeFlag(
				'nonlinear-uncertainty',
				`u(R)/R = ${((100 * j.uRatio) / j.ratio).toFixed(0)} %.`,
				mode
			)
		);
	}
	// Same data: the difference of two estimates has variance ≈ u²(separate) − u²(joint) (statistical parts).
	const uStatJ = j.uTemperatureK;
	const uStatS = sepBudget
		? Math.hypot(
				...sepBudget.rows.filter((r) => r.input.startsWith('area_')).map((r) => r.contribution_k)
			)
		: NaN;
	if (Number.isFinite(tSep) && Number.isFinite(uStatS)) {
		const sd = Math.sqrt(Math.max(uStatS ** 2 - uStatJ ** 2, 0.25 * uStatS ** 2));
		if (Math.abs(j.temperatureK - tSep) > 4 * sd) {
			flags.push(
				makeFlag(
					'joint-separate-disagree',
					`Joint ${j.temperatureK.toFixed(1)} K, separate ${tSep.toFixed(1)} K.`,
					mode
				)
			);
		}
	}
	const chosen =
		method === 'joint-fit'
			? { t: j.temperatureK, b: jointBudget, m: jointModel }
			: { t: tSep, b: sepBudget, m: sepModel };
	if (method === 'separate-bands') {
		if (shapeFixed) flags.push(makeFlag('shape-fixed', undefined, mode));
		if (!Number.isFinite(tSep))
			flags.push(
				makeFlag('implausible-temperature', `Separate ratio ${ratioSep.toPrecision(3)}.`, mode)
			);
	}
	const cRow = chosen.b?.rows.find((r) => r.input === 'c_factor' || r.input === 'reference_ratio');
	if (cRow && cRow.variance_share > 0.5) {
		flags.push(
			makeFlag('response-dominates', `${Math.round(100 * cRow.variance_share)} % of u²(T).`, mode)
		);
	}
	const failed = hasError(flags) || !chosen.b || !Number.isFinite(chosen.t);
	const bandsOf =
		method === 'joint-fit'
			? { stokes: j.stokes, anti_stokes: j.antiStokes }
			: { stokes: s.band, anti_stokes: as.band };
	const result: ModeResult = {
		mode_cm1: mode,
		shift_cm1: method === 'joint-fit' ? j.shiftCm1 : sepShift,
		u_shift_cm1: method === 'joint-fit' ? j.uShiftCm1 : s.band.u_center_cm1,
		temperature_k: failed ? null : chosen.t,
		u_temperature_k: failed ? null : chosen.b!.u,
		stokes: bandsOf.stokes,
		anti_stokes: bandsOf.anti_stokes,
		budget: chosen.b?.rows ?? [],
		reduced_chi2:
			method === 'joint-fit' ? j.reducedChi2 : (s.band.reduced_chi2 + as.band.reduced_chi2) / 2,
		u_axis_offset_cm1: method === 'joint-fit' ? j.uOffsetCm1 : undefined,
		joint: {
			temperature_k: j.temperatureK,
			u_temperature_k: jointBudget.u,
			u_statistical_k: j.uTemperatureK,
			ratio: j.ratio,
			u_ratio: j.uRatio,
			converged: j.converged,
			iterations: j.fit.iterations
		}
	};
	if (method === 'joint-fit') result.axis_offset_cm1 = j.offsetCm1;
	if (opts.peakShift && result.temperature_k !== null) {
		const ps = peakShiftTemperature(
			result.shift_cm1,
			Math.hypot(result.u_shift_cm1, opts.uModeCm1 ?? 0),
			opts.peakShift
		);
		result.peak_shift = {
			temperature_k: ps.temperature_k,
			u_temperature_k: ps.u_temperature_k,
			model: ps.model
		};
		const both = Math.hypot(ps.u_temperature_k, result.u_temperature_k ?? 0);
		if (Math.abs(ps.temperature_k - result.temperature_k) > 3 * both) {
			flags.push(
				makeFlag(
					'peak-shift-disagrees',
					`Peak shift ${ps.temperature_k.toFixed(0)} ± ${ps.u_temperature_k.toFixed(0)} K${ps.anchored ? '' : ' (model not anchored to a reference)'}; strain also moves the band.`,
					mode
				)
			);
		}
	}
	if (Number.isFinite(tSep) && sepBudget) {
		result.separate = {
			temperature_k: tSep,
			u_temperature_k: sepBudget.u,
			ratio: ratioSep,
			u_ratio: uRatioSep
		};
	}
	return { result, model: failed ? null : chosen.m, flags };
}

/** Inputs shared by every mode (fully correlated between them). */
export function sharedInputs(sources: ResponseSource[]): string[] {
	const keys = ['laser_wavenumber'];
	if (sources.length === 1 && sources[0].kind === 'constant') keys.push('c_factor');
	if (sources.every((s) => s.kind === 'reference')) keys.push('t0');
	return keys;
}

/** JCGM 101 for the reported temperature: inputs drawn from their PDFs, the mean of modes re-evaluated. */
function monteCarlo(
	models: ModeModel[],
	weights: number[],
	shared: string[],
	trials: number,
	seed: number
): MonteCarloResult {
	// One distribution per distinct input; shared inputs are drawn once for all modes.
	const dists: Distribution[] = [];
	const index: number[][] = models.map(() => []);
	const sharedAt = new Map<string, number>();
	models.forEach((m, mi) => {
		for (const inp of m.inputs) {
			if (shared.includes(inp.key) && sharedAt.has(inp.key)) {
				index[mi].push(sharedAt.get(inp.key)!);
				continue;
			}
			dists.push(
				inp.u > 0
					? { kind: 'normal', mean: inp.value, sd: inp.u }
					: { kind: 'fixed', value: inp.value }
			);
			index[mi].push(dists.length - 1);
			if (shared.includes(inp.key)) sharedAt.set(inp.key, dists.length - 1);
		}
	});
	const bufs = models.map((m) => new Float64Array(m.inputs.length));
	return propagate(
		dists,
		(x) => {
			let t = 0;
			for (let mi = 0; mi < models.length; mi++) {
				const b = bufs[mi];
				for (let k = 0; k < b.length; k++) b[k] = x[index[mi][k]];
				t += weights[mi] * models[mi].evaluate(b);
			}
			return t;
		},
		trials,
		seed
	);
}

export function estimate(
	stokes: PreparedWindow,
	antiStokes: PreparedWindow,
	opts: EstimateOptions
): Reading {
	if (!opts.modes.length)
		throw new EngineError('no-mode', 'Name at least one Raman mode (cm⁻¹) to measure.');
	const sources = Array.isArray(opts.response) ? opts.response : [opts.response];
	if (sources.length !== 1 && sources.length !== opts.modes.length) {
		throw new EngineError(
			'bad-response',
			`Give one response calibration, or one per mode (${opts.modes.length}).`
		);
	}
	for (const m of opts.modes) checkInputs(stokes, antiStokes, m, opts);
	const k = opts.coverageFactor ?? 2;
	const flags: Flag[] = [];
	for (const w of [stokes, antiStokes]) {
		if (w.spikesRemoved > 0)
			flags.push(makeFlag('spikes-removed', `${w.spikesRemoved} in the ${w.side} window.`));
		if (w.saturatedPoints > 0)
			flags.push(makeFlag('saturation', `${w.saturatedPoints} points in the ${w.side} window.`));
	}
	const outcomes = opts.modes.map((m, i) =>
		analyseMode(stokes, antiStokes, m, sources[sources.length === 1 ? 0 : i], opts)
	);
	for (const o of outcomes) flags.push(...o.flags);
	const good = outcomes.filter((o) => o.result.temperature_k !== null && o.model);

	let t: number | null = null;
	let u: number | null = null;
	let budget: BudgetRow[] = [];
	let birge: number | undefined;
	let weights: number[] = [];
	const shared = sharedInputs(sources);
	if (good.length === 1) {
		t = good[0].result.temperature_k;
		u = good[0].result.u_temperature_k;
		budget = good[0].result.budget;
		weights = [1];
	} else if (good.length > 1) {
		const wm = weightedMean(
			good.map((o) => ({
				modeCm1: o.result.mode_cm1,
				temperatureK: o.result.temperature_k!,
				budget: o.result.budget
			})),
			shared
		);
		t = wm.temperatureK;
		u = wm.uTemperatureK;
		budget = wm.budget;
		birge = wm.birgeRatio;
		weights = wm.weights;
		if (wm.pValue < 0.01) {
			flags.push(
				makeFlag('modes-disagree', `Birge ratio ${wm.birgeRatio.toFixed(2)}; u(T) scaled by it.`)
			);
		}
	}
	if (good.length < outcomes.length && good.length > 0) {
		// A mode that failed is reported with its reason; the others still give the reading.
		for (const f of flags) if (f.severity === 'error') f.severity = 'warning';
	}

	const reading: Reading = {
		engine_version: ENGINE_VERSION,
		method: opts.method ?? 'joint-fit',
		exponent: opts.exponent,
		lineshape: opts.lineshape,
		laser_nm: opts.laserNm,
		temperature_k: t,
		u_temperature_k: u,
		expanded_uncertainty_k: u === null ? null : expanded(u, k),
		coverage_factor: k,
		modes: outcomes.map((o) => o.result),
		budget,
		flags,
		spikes_removed: stokes.spikesRemoved + antiStokes.spikesRemoved
	};
	if (birge !== undefined) reading.birge_ratio = birge;
	if (opts.monteCarlo && t !== null && u !== null) {
		const mc = monteCarlo(
			good.map((o) => o.model!),
			weights,
			shared,
			Math.max(100, Math.floor(opts.monteCarlo.trials)),
			opts.monteCarlo.seed ?? 1
		);
		reading.monte_carlo = mc;
		if (Math.abs(mc.sd_k - u) > 0.1 * u && good.length === 1) {
			flags.push(
				makeFlag(
					'monte-carlo-differs',
					`Monte Carlo s.d. ${mc.sd_k.toFixed(2)} K, GUM ${u.toFixed(2)} K.`
				)
			);
		}
	}
	return reading;
}
