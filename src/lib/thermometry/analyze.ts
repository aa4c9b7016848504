/**
 * The pipeline from file texts to a reading: parse → axis → prepare → estimate. This is the one
 * function the worker, the API and the command line call, so every caller refuses the same
 * inputs with the same codes and produces the same JSON.
 */
import {
	checkBandCoverage,
	checkLaserAboveMode,
	splitCombined,
	toRamanShift,
	toShiftWindow,
	type AxisUnit,
	type ShiftWindow
} from './axis';
import { findResidualSpikes } from './despike';
import { estimate, type EstimateOptions } from './estimate';
import { parseSpectrum, type ParsedSpectrum, type SpectrumFile } from './parse';
import {
	prepareWindow,
	type BaselineOptions,
	type DarkInput,
	type PreparedResult
} from './prepare';
import {
	EngineError,
	type Detector,
	type Flag,
	type Lineshape,
	type Reading,
	type ResponseSource
} from './types';

/** A file as the pipeline sees it: a name for messages and its text. */
export type FileText = SpectrumFile;

/** A dark: a file on the same x axis as the window it belongs to, or constant counts per point. */
export type DarkSource = FileText | number;

export interface PairInputs {
	/** Two-file measurement: the Stokes and the anti-Stokes window. */
	stokes?: FileText;
	antiStokes?: FileText;
	/** One file spanning both sides of the laser line. */
	combined?: FileText;
	/** Dark for both windows (a file spanning both, or a constant). */
	dark?: DarkSource;
	/** Per-window darks, when the windows were taken at different grating positions. */
	darkStokes?: DarkSource;
	darkAntiStokes?: DarkSource;
	/** A measured relative response curve R(shift): x = signed Raman shift (or nm), y = R. */
	responseCurve?: FileText;
}

export interface AnalyzeOptions {
	laserNm: number;
	/** Mode shifts in cm⁻¹ (magnitudes); at least one. */
	modes: number[];
	/** photon-counting → exponent 3, energy → exponent 4 (physics.md §1.1). Default photon-counting. */
	detector?: Detector;
	lineshape?: Lineshape;
	/** Exposures in s (default 1 s each); a combined file has one exposure (either option). */
	exposureStokesS?: number;
	exposureAntiStokesS?: number;
	/** Exposure of the dark file(s) when it differs from the window's, s. */
	darkExposureS?: number;
	/** The unit of every file's x; `auto` (default) guesses per file. */
	xAxis?: AxisUnit | 'auto';
	/** C as a constant or from a reference run. A response curve comes in `PairInputs`. */
	response?: Extract<ResponseSource, { kind: 'constant' } | { kind: 'reference' }>;
	/** Relative standard uncertainty of each value of the response curve (required with a curve). */
	uResponseRelative?: number;
	coverageFactor?: number;
	monteCarlo?: { trials: number; seed?: number };
	filterCutoffCm1?: number;
	uModeCm1?: number;
	uLaserCm1?: number;
	method?: 'joint-fit' | 'separate-bands';
	/** Detector ceiling in raw counts (default: found from flat tops). */
	saturationCounts?: number;
	/** Fit a clipped band with its clipped points masked (flagged) instead of refusing it. */
	allowSaturatedBand?: boolean;
	removeSpikes?: boolean;
	readNoiseCounts?: number;
	baseline?: BaselineOptions;
}

/** The prepared pair and what preparation found, for callers that show the spectra. */
export interface PreparedPair {
	stokes: PreparedResult;
	antiStokes: PreparedResult;
}

function darkInput(
	source: DarkSource | undefined,
	exposureS: number | undefined
): DarkInput | undefined {
	if (source === undefined) return undefined;
	if (typeof source === 'number') {
		if (!Number.isFinite(source)) {
			throw new EngineError(
				'invalid-dark',
				`The dark level must be a finite number of counts (got ${source}).`
			);
		}
		return { kind: 'constant', counts: source };
	}
	return { kind: 'spectrum', spectrum: parseSpectrum(source), exposureS };
}

function responseSource(inputs: PairInputs, options: AnalyzeOptions): ResponseSource {
	if (inputs.responseCurve) {
		if (options.response) {
			throw new EngineError(
				'conflicting-response',
				'Give the response ratio C one way: a constant, a reference run or a response curve, not several.'
			);
		}
		const curve = parseSpectrum(inputs.responseCurve, { minPoints: 2 });
		// A curve labelled in nm is put on the shift axis; otherwise its x is a signed Raman shift.
		const nm = /nm|wavelength/i.test(curve.xLabel ?? '');
		const shift = nm ? toRamanShift(curve.x, 'wavelength', options.laserNm) : curve.x;
		const order = Array.from(shift.keys()).sort((a, b) => shift[a] - shift[b]);
		const u = options.uResponseRelative;
		if (u === undefined || !(u >= 0)) {
			throw new EngineError(
				'missing-response-uncertainty',
				`${inputs.responseCurve.name}: give the relative standard uncertainty of the response curve (e.g. 0.01 for 1 %); without it C would look exact.`,
				{ file: inputs.responseCurve.name }
			);
		}
		return {
			kind: 'curve',
			shift: order.map((i) => shift[i]),
			response: order.map((i) => curve.y[i]),
			u_relative: u
		};
	}
	if (!options.response) {
		throw new EngineError(
			'missing-response',
			'The response ratio C is not given: pass a constant C with its uncertainty, a response curve, or a reference-temperature run. Without it the temperature would be silently wrong.'
		);
	}
	return options.response;
}

/** Parse, put on the shift axis and prepare both windows; refuses bad inputs. */
export function preparePair(inputs: PairInputs, options: AnalyzeOptions): PreparedPair {
	if (!(options.laserNm > 0) || !Number.isFinite(options.laserNm)) {
		throw new EngineError(
			'invalid-option',
			`The laser wavelength must be a positive number of nm (got ${options.laserNm}).`
		);
	}
	if (options.modes.length === 0 || options.modes.some((m) => !(m > 0) || !Number.isFinite(m))) {
		throw new EngineError(
			'invalid-option',
			'Give at least one mode as a positive Raman shift in cm⁻¹.'
		);
	}
	checkLaserAboveMode(options.laserNm, options.modes);
	const axis = { laserNm: options.laserNm, modes: options.modes, unit: options.xAxis };
	let stokes: ShiftWindow;
	let antiStokes: ShiftWindow;
	if (inputs.combined) {
		if (inputs.stokes || inputs.antiStokes) {
			throw new EngineError(
				'conflicting-inputs',
				'Give either one combined file or a Stokes and an anti-Stokes file, not both.'
			);
		}
		({ stokes, antiStokes } = splitCombined(parseSpectrum(inputs.combined), axis));
	} else {
		if (!inputs.stokes || !inputs.antiStokes) {
			throw new EngineError(
				'missing-input',
				`The ${inputs.stokes ? 'anti-Stokes' : 'Stokes'} file is missing; give both windows or one combined file.`
			);
		}
		stokes = toShiftWindow(parseSpectrum(inputs.stokes), 'stokes', axis);
		antiStokes = toShiftWindow(parseSpectrum(inputs.antiStokes), 'anti-stokes', axis);
	}
	const coverage = { filterCutoffCm1: options.filterCutoffCm1 };
	checkBandCoverage(stokes, options.modes, coverage);
	checkBandCoverage(antiStokes, options.modes, coverage);

	let tS = options.exposureStokesS ?? 1;
	let tAS = options.exposureAntiStokesS ?? 1;
	if (inputs.combined) {
		// One readout holds both sides, so one exposure; two different ones are a mistake.
		const a = options.exposureStokesS;
		const b = options.exposureAntiStokesS;
		if (a !== undefined && b !== undefined && a !== b) {
			throw new EngineError(
				'invalid-option',
				`A combined file is one exposure, but the Stokes (${a} s) and anti-Stokes (${b} s) exposures differ.`
			);
		}
		tS = tAS = a ?? b ?? 1;
	}
	// A shared dark file is parsed once and interpolated onto each window.
	const shared = darkInput(inputs.dark, options.darkExposureS);
	const common = {
		modes: options.modes,
		saturationCounts: options.saturationCounts,
		allowSaturatedBand: options.allowSaturatedBand,
		removeSpikes: options.removeSpikes,
		readNoiseCounts: options.readNoiseCounts,
		baseline: options.baseline
	};
	return {
		stokes: prepareWindow(stokes, {
			...common,
			exposureS: tS,
			dark: darkInput(inputs.darkStokes, options.darkExposureS) ?? shared
		}),
		antiStokes: prepareWindow(antiStokes, {
			...common,
			exposureS: tAS,
			dark: darkInput(inputs.darkAntiStokes, options.darkExposureS) ?? shared
		})
	};
}

/** Codes whose flag preparation owns (it knows the window and the counts). */
const PREPARATION_FLAGS = new Set(['spikes-removed', 'saturation']);

const SEVERITY_RANK = { info: 0, warning: 1, error: 2 } as const;

/** One flag per code: the two windows' flags of a kind become one sentence. */
function mergeFlags(flags: Flag[], pair: PreparedPair): Flag[] {
	const out: Flag[] = [];
	for (const f of flags) {
		const prev = out.find((o) => o.code === f.code);
		if (!prev) {
			out.push({ ...f });
			continue;
		}
		if (SEVERITY_RANK[f.severity] > SEVERITY_RANK[prev.severity]) prev.severity = f.severity;
		prev.message = `${prev.message} ${f.message}`;
	}
	const spikes = out.find((f) => f.code === 'spikes-removed');
	if (spikes) {
		const s = pair.stokes.window.spikesRemoved;
		const a = pair.antiStokes.window.spikesRemoved;
		spikes.message = `${s + a} cosmic-ray spike${s + a === 1 ? '' : 's'} removed before fitting (Stokes window ${s}, anti-Stokes window ${a}).`;
	}
	return out;
}

/** Turn a measurement's files and options into a reading. Throws `EngineError` on refused input. */
export function analyzePair(inputs: PairInputs, options: AnalyzeOptions): Reading {
	return analyzePairDetailed(inputs, options).reading;
}

/**
 * `analyzePair` plus the prepared windows it fitted (final masks, spikes of both passes, the
 * subtracted baseline), for callers that also plot the spectra: one parse and one preparation.
 */
export function analyzePairDetailed(
	inputs: PairInputs,
	options: AnalyzeOptions
): { reading: Reading; prepared: PreparedPair } {
	const response = responseSource(inputs, options);
	const pair = preparePair(inputs, options);
	const opts: EstimateOptions = {
		laserNm: options.laserNm,
		modes: options.modes,
		exponent: (options.detector ?? 'photon-counting') === 'energy' ? 4 : 3,
		lineshape: options.lineshape ?? 'lorentzian',
		response,
		coverageFactor: options.coverageFactor,
		monteCarlo: options.monteCarlo,
		filterCutoffCm1: options.filterCutoffCm1,
		uModeCm1: options.uModeCm1,
		uLaserCm1: options.uLaserCm1,
		method: options.method
	};
	let reading = estimate(pair.stokes.window, pair.antiStokes.window, opts);
	// Cosmic rays hiding on a band top are found against the fitted band, then the pair refitted.
	for (let pass = 0; pass < 4 && options.removeSpikes !== false; pass++) {
		let found = 0;
		for (const m of reading.modes) {
			for (const [prep, band] of [
				[pair.stokes, m.stokes],
				[pair.antiStokes, m.anti_stokes]
			] as const) {
				if (!band) continue;
				const hits = findResidualSpikes(prep.window, band, opts.lineshape);
				for (const i of hits) prep.window.usable[i] = 0;
				// Adjacent hits are one cosmic ray.
				const events = hits.filter((h, j) => j === 0 || hits[j - 1] !== h - 1).length;
				prep.window.spikesRemoved += events;
				if (events > 0 && !prep.flags.some((f) => f.code === 'spikes-removed')) {
					prep.flags.push({ code: 'spikes-removed', severity: 'info', message: '' });
				}
				found += events;
			}
		}
		if (found === 0) break;
		reading = estimate(pair.stokes.window, pair.antiStokes.window, opts);
	}
	const mine = mergeFlags([...pair.stokes.flags, ...pair.antiStokes.flags], pair);
	const theirs = reading.flags.filter(
		(f) => !PREPARATION_FLAGS.has(f.code) || mine.every((m) => m.code !== f.code)
	);
	reading.flags = [...mine, ...theirs];
	reading.spikes_removed = pair.stokes.window.spikesRemoved + pair.antiStokes.window.spikesRemoved;
	return { reading, prepared: pair };
}

/** JSON.stringify replacer for readings: typed arrays to arrays, non-finite numbers to null. */
export function jsonReplacer(_key: string, value: unknown): unknown {
	if (typeof value === 'number' && !Number.isFinite(value)) return null;
	if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>);
	return value;
}

/** The reading as plain JSON data (what the CLI prints and the API returns). */
export function toJson(reading: Reading): Record<string, unknown> {
	return JSON.parse(JSON.stringify(reading, jsonReplacer));
}

export type { ParsedSpectrum };
