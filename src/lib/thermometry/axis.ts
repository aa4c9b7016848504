/**
 * Step 2 of the engine: put a parsed spectrum on the Raman-shift axis of its side.
 *
 * Raman shift Δν̃ = ν̃_L − ν̃_scattered with ν̃_L = 10⁷/λ_L[nm] (design.md, physics.md): Stokes
 * light is scattered below the laser wavenumber (Δν̃ > 0), anti-Stokes light above it (Δν̃ < 0).
 * A file's x may already be a Raman shift, an absolute wavenumber or a wavelength in nm. The side
 * of a window is known from which input it came in, so an anti-Stokes window given as positive
 * shift magnitudes is turned negative; a combined file is split at the laser line.
 */
import type { ParsedSpectrum } from './parse';
import { MIN_POINTS } from './parse';
import { EngineError, type Side } from './types';

export type AxisUnit = 'raman-shift' | 'wavenumber' | 'wavelength';

/** A window on the Raman-shift axis, still in raw counts. */
export interface ShiftWindow {
	side: Side;
	source: string;
	/** Raman shift, cm⁻¹, strictly ascending; negative on the anti-Stokes side. */
	shift: Float64Array;
	/** Raw counts per point, in the order of `shift`. */
	counts: Float64Array;
	/** The file's own x of each point (for a dark file on the same axis), order of `shift`. */
	fileX: Float64Array;
	/** Source row of each point, for messages. */
	rows: Int32Array;
	unit: AxisUnit;
}

/** Largest |Raman shift| we accept as plausible when guessing the unit; first-order bands end near 4000. */
const PLAUSIBLE_SHIFT_CM1 = 6000;

/** ν̃_L = 10⁷ / λ_L[nm] in cm⁻¹ (exact arithmetic: 1 cm = 10⁷ nm). */
export function laserWavenumber(laserNm: number): number {
	return 1e7 / laserNm;
}

/** Raman shift of each x for a given unit (no sign change for sides). */
export function toRamanShift(x: ArrayLike<number>, unit: AxisUnit, laserNm: number): Float64Array {
	const nuL = laserWavenumber(laserNm);
	const out = new Float64Array(x.length);
	for (let i = 0; i < x.length; i++) {
		const v = x[i];
		out[i] = unit === 'raman-shift' ? v : unit === 'wavenumber' ? nuL - v : nuL - 1e7 / v;
	}
	return out;
}

/** Refuse a laser whose wavenumber is not above a mode: the Stokes line would not exist. */
export function checkLaserAboveMode(laserNm: number, modes: number[]): void {
	const nuL = laserWavenumber(laserNm);
	for (const m of modes) {
		if (!(nuL > Math.abs(m))) {
			throw new EngineError(
				'laser-not-above-mode',
				`laser ${laserNm} nm has wavenumber ${nuL.toFixed(1)} cm⁻¹, not above the mode at ${m} cm⁻¹; no Stokes band can exist.`
			);
		}
	}
}

function unitFromLabel(label: string | undefined): AxisUnit | 'cm-1' | undefined {
	if (!label) return undefined;
	const l = label.toLowerCase();
	if (/shift|raman|δ|delta/.test(l)) return 'raman-shift';
	if (/absolute|abs\.? ?wavenumber/.test(l)) return 'wavenumber';
	if (/wavelength|lambda|λ|\bnm\b|nanomet/.test(l)) return 'wavelength';
	if (/cm-1|cm⁻¹|1\/cm|wavenumber/.test(l)) return 'cm-1';
	return undefined;
}

/**
 * Guess the unit of a file's x. A label (CSV header, JCAMP-DX ##XUNITS) decides when it is clear;
 * otherwise each unit is tried and kept when it gives plausible shifts and, among those, when the
 * window then covers the asked mode on its side. An ambiguous file is refused: the caller must
 * then name the unit (CLI `--x-axis`).
 */
export function detectAxisUnit(
	spec: ParsedSpectrum,
	laserNm: number,
	modes: number[],
	side: Side | 'combined'
): AxisUnit {
	const fromLabel = unitFromLabel(spec.xLabel);
	if (fromLabel && fromLabel !== 'cm-1') return fromLabel;
	const candidates: AxisUnit[] =
		fromLabel === 'cm-1'
			? ['raman-shift', 'wavenumber']
			: ['raman-shift', 'wavenumber', 'wavelength'];
	const plausible = candidates.filter((u) => {
		if (u !== 'raman-shift' && spec.x[0] <= 0) return false;
		const s = toRamanShift([spec.x[0], spec.x[spec.x.length - 1]], u, laserNm);
		return Math.abs(s[0]) <= PLAUSIBLE_SHIFT_CM1 && Math.abs(s[1]) <= PLAUSIBLE_SHIFT_CM1;
	});
	const covers = plausible.filter((u) => {
		const s = toRamanShift([spec.x[0], spec.x[spec.x.length - 1]], u, laserNm);
		const lo = Math.min(s[0], s[1]);
		const hi = Math.max(s[0], s[1]);
		const inside = (v: number) => v >= lo && v <= hi;
		// A separate window lies (almost) wholly on its own side of the laser line.
		if (side !== 'combined' && !(side === 'anti-stokes' && u === 'raman-shift')) {
			const all = toRamanShift(spec.x, u, laserNm);
			let wrong = 0;
			for (let i = 0; i < all.length; i++) if (side === 'stokes' ? all[i] < 0 : all[i] > 0) wrong++;
			if (wrong > 0.1 * all.length) return false;
		}
		return modes.every((m) => {
			const a = Math.abs(m);
			if (side === 'combined') return inside(a) && inside(-a);
			if (side === 'stokes') return inside(a);
			// An anti-Stokes Raman-shift file may hold positive magnitudes.
			return inside(-a) || (u === 'raman-shift' && inside(a));
		});
	});
	if (covers.length === 1) return covers[0];
	if (covers.length === 0 && plausible.length === 1) return plausible[0];
	throw new EngineError(
		'axis-ambiguous',
		`${spec.file}: cannot tell whether x (${spec.x[0]} … ${spec.x[spec.x.length - 1]}) is ${(covers.length
			? covers
			: plausible.length
				? plausible
				: candidates
		).join(' or ')}; name the x axis unit explicitly.`,
		{ file: spec.file }
	);
}

function window(
	spec: ParsedSpectrum,
	side: Side,
	unit: AxisUnit,
	shift: Float64Array,
	from: number,
	to: number
): ShiftWindow {
	// Slices are on the converted axis; make them ascending in shift whatever the file order.
	const n = to - from;
	const ascending = n < 2 || shift[from + 1] > shift[from];
	const out: ShiftWindow = {
		side,
		source: spec.file,
		shift: new Float64Array(n),
		counts: new Float64Array(n),
		fileX: new Float64Array(n),
		rows: new Int32Array(n),
		unit
	};
	for (let k = 0; k < n; k++) {
		const i = ascending ? from + k : to - 1 - k;
		out.shift[k] = shift[i];
		out.counts[k] = spec.y[i];
		out.fileX[k] = spec.x[i];
		out.rows[k] = spec.rows[i];
	}
	return out;
}

function refuseUnitValues(spec: ParsedSpectrum, unit: AxisUnit): void {
	if (unit === 'raman-shift') return;
	if (spec.x[0] <= 0) {
		throw new EngineError(
			'axis-invalid',
			`${spec.file}, row ${spec.rows[0]}: x = ${spec.x[0]} cannot be a ${unit}; it must be positive.`,
			{ file: spec.file, row: spec.rows[0] }
		);
	}
}

export interface AxisOptions {
	laserNm: number;
	modes: number[];
	/** The unit of the file's x; `auto` (default) guesses it, see `detectAxisUnit`. */
	unit?: AxisUnit | 'auto';
}

/**
 * One window of a two-file measurement on the Raman-shift axis. Refuses a Stokes file holding
 * anti-Stokes data (most of its shifts negative) and the reverse.
 */
export function toShiftWindow(spec: ParsedSpectrum, side: Side, opts: AxisOptions): ShiftWindow {
	checkLaserAboveMode(opts.laserNm, opts.modes);
	const unit =
		!opts.unit || opts.unit === 'auto'
			? detectAxisUnit(spec, opts.laserNm, opts.modes, side)
			: opts.unit;
	refuseUnitValues(spec, unit);
	const shift = toRamanShift(spec.x, unit, opts.laserNm);
	const n = shift.length;
	let negative = 0;
	for (let i = 0; i < n; i++) if (shift[i] < 0) negative++;
	if (side === 'anti-stokes' && unit === 'raman-shift' && negative === 0) {
		// Positive magnitudes: the side is known from the input, so flip the sign.
		for (let i = 0; i < n; i++) shift[i] = -shift[i];
		negative = n;
	}
	const wrong = side === 'stokes' ? negative : n - negative;
	if (wrong > n / 2) {
		const holds = side === 'stokes' ? 'anti-Stokes' : 'Stokes';
		throw new EngineError(
			'wrong-side',
			`${spec.file}: given as the ${side === 'stokes' ? 'Stokes' : 'anti-Stokes'} window but ${wrong} of ${n} points lie on the ${holds} side of the laser line (shift ${shift[0].toFixed(1)} … ${shift[n - 1].toFixed(1)} cm⁻¹ as ${unit}); it holds ${holds} data.`,
			{ file: spec.file }
		);
	}
	return window(spec, side, unit, shift, 0, n);
}

/** A combined file spanning both sides, split at the laser line (Δν̃ = 0). */
export function splitCombined(
	spec: ParsedSpectrum,
	opts: AxisOptions
): { stokes: ShiftWindow; antiStokes: ShiftWindow } {
	checkLaserAboveMode(opts.laserNm, opts.modes);
	const unit =
		!opts.unit || opts.unit === 'auto'
			? detectAxisUnit(spec, opts.laserNm, opts.modes, 'combined')
			: opts.unit;
	refuseUnitValues(spec, unit);
	const shift = toRamanShift(spec.x, unit, opts.laserNm);
	const n = shift.length;
	// Converted shifts are monotonic (parse sorted x), rising for wavelength/shift, falling for wavenumber.
	const rising = shift[n - 1] > shift[0];
	let split = 0; // first index on the later side of zero in file order
	while (split < n && (rising ? shift[split] < 0 : shift[split] > 0)) split++;
	let end = split; // skip a point exactly on the laser line: it belongs to neither side
	while (end < n && shift[end] === 0) end++;
	const [asFrom, asTo, sFrom, sTo] = rising ? [0, split, end, n] : [end, n, 0, split];
	for (const [side, count] of [
		['anti-Stokes', asTo - asFrom],
		['Stokes', sTo - sFrom]
	] as const) {
		if (count < MIN_POINTS) {
			throw new EngineError(
				'too-few-points',
				`${spec.file}: the combined file has ${count} point${count === 1 ? '' : 's'} on the ${side} side of the laser line; at least ${MIN_POINTS} are needed.`,
				{ file: spec.file }
			);
		}
	}
	return {
		stokes: window(spec, 'stokes', unit, shift, sFrom, sTo),
		antiStokes: window(spec, 'anti-stokes', unit, shift, asFrom, asTo)
	};
}

export interface CoverageOptions {
	/** Half-width of the region that must hold data around ±mode, cm⁻¹ (default 15). */
	halfWidthCm1?: number;
	/** Points needed in that region (default 5). */
	minPoints?: number;
	/** Notch/edge filter cut-off: points with |shift| below it carry no Raman signal. */
	filterCutoffCm1?: number;
}

/** Refuse a window that has no usable data where a mode's band must be. */
export function checkBandCoverage(
	w: ShiftWindow,
	modes: number[],
	opts: CoverageOptions = {}
): void {
	const half = opts.halfWidthCm1 ?? 15;
	const need = opts.minPoints ?? 5;
	const cutoff = opts.filterCutoffCm1 ?? 0;
	const sign = w.side === 'stokes' ? 1 : -1;
	const n = w.shift.length;
	for (const m of modes) {
		const centre = sign * Math.abs(m);
		let count = 0;
		for (let i = 0; i < n; i++) {
			const s = w.shift[i];
			if (Math.abs(s - centre) <= half && Math.abs(s) >= cutoff) count++;
		}
		if (count >= need) continue;
		const name = w.side === 'stokes' ? 'Stokes' : 'anti-Stokes';
		const why =
			cutoff >= Math.abs(m) - half
				? ` The band lies inside or at the filter cut-off (${cutoff} cm⁻¹).`
				: '';
		throw new EngineError(
			'no-data-at-band',
			`${w.source}: the ${name} window covers ${w.shift[0].toFixed(1)} … ${w.shift[n - 1].toFixed(1)} cm⁻¹ and has ${count} usable point${count === 1 ? '' : 's'} within ±${half} cm⁻¹ of the mode at ${centre} cm⁻¹ (${need} needed).${why}`,
			{ file: w.source }
		);
	}
}
