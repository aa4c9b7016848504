/**
 * Step 3 of the engine: from raw counts on the Raman-shift axis to a `PreparedWindow` that the
 * estimator can fit: saturation marked, cosmic-ray spikes removed and counted, dark subtracted,
 * exposure normalised to counts per second, and (on request) a fluorescence baseline removed.
 *
 * Order matters. Saturation and spikes are found on the raw counts, because the detector ceiling
 * and the Poisson scale of a spike are raw-count facts. The dark is subtracted next, then
 * everything is divided by the exposure so that two windows taken with different exposures
 * compare (physics.md §5). The variance is carried alongside at every step: Poisson from the raw
 * counts plus the dark's own, scaled by 1/t², plus the baseline's own where one is subtracted.
 */
import type { ShiftWindow } from './axis';
import type { ParsedSpectrum } from './parse';
import { EngineError, type Flag, type PreparedWindow } from './types';

/** How the dark (offset + dark current) is known. */
export type DarkInput =
	| {
			kind: 'constant';
			/** Counts per point for the window's exposure; taken as exact (no noise of its own). */
			counts: number;
	  }
	| {
			kind: 'spectrum';
			/** A dark file on the same x axis (the file's own unit) as the window. */
			spectrum: ParsedSpectrum;
			/** Exposure of the dark, s; when it differs from the window's, the dark is scaled. */
			exposureS?: number;
	  };

export type BaselineOptions =
	| { kind: 'none' }
	| {
			kind: 'polynomial';
			/** Polynomial order (default 3). */
			order?: number;
			/** Half-width around each ±mode kept out of the fit, cm⁻¹ (default 40). */
			excludeHalfWidthCm1?: number;
	  }
	| {
			kind: 'als';
			/** Smoothness λ of the asymmetric least squares (default 1e5). */
			lambda?: number;
			/** Asymmetry p: weight of points above the baseline (default 0.01). */
			p?: number;
			excludeHalfWidthCm1?: number;
	  };

export interface PrepareOptions {
	/** Exposure of this window, s (counts are divided by it). */
	exposureS: number;
	/** Modes (cm⁻¹, magnitudes) whose bands this window should hold. */
	modes: number[];
	dark?: DarkInput;
	/** Detector ceiling in raw counts. Default: found from flat tops, see `findSaturation`. */
	saturationCounts?: number;
	/** Half-width around ±mode that counts as "the band" for saturation, cm⁻¹ (default 15). */
	bandHalfWidthCm1?: number;
	/** Fit a band whose top is clipped, with the clipped points masked (flagged). Default false. */
	allowSaturatedBand?: boolean;
	/** Remove cosmic-ray spikes (default true). */
	removeSpikes?: boolean;
	/** Spike threshold in standard deviations of the jump (default 6). */
	spikeSigma?: number;
	/** Read noise, counts rms per point, added to the variance (default 0). */
	readNoiseCounts?: number;
	baseline?: BaselineOptions;
}

export interface SpikeEvent {
	/** Index of the first point of the spike in the window. */
	index: number;
	/** Points it covered (1–3). */
	width: number;
	shift: number;
	/** Counts above the surrounding data. */
	height: number;
}

export interface PreparedResult {
	window: PreparedWindow;
	spikes: SpikeEvent[];
	/** Points at the detector ceiling, and whether any of them lie on a band. */
	saturation: { ceiling: number | null; points: number; inBand: boolean };
	/** The subtracted baseline in counts/s, when one was. */
	baseline?: Float64Array;
	flags: Flag[];
}

const SIDE_NAME = { stokes: 'Stokes', 'anti-stokes': 'anti-Stokes' } as const;

/**
 * The detector ceiling of a raw-count window, or null. A real band top fluctuates by √N from point
 * to point, so three or more equal neighbouring points at the window maximum are a flat top, not
 * data (four below ~3,000 counts, where chance ties are likelier); two points at an ADC full scale
 * (2ᵏ − 1) are also taken as clipped (common practice: 12–20-bit ADCs), one alone is not.
 */
export function findSaturation(counts: Float64Array): number | null {
	const n = counts.length;
	let max = -Infinity;
	for (let i = 0; i < n; i++) if (counts[i] > max) max = counts[i];
	if (!(max > 0)) return null;
	const fullScale = Number.isInteger(max) && max >= 1023 && Number.isInteger(Math.log2(max + 1));
	let run = 0;
	let longest = 0;
	let atMax = 0;
	for (let i = 0; i < n; i++) {
		run = counts[i] === max ? run + 1 : 0;
		if (counts[i] === max) atMax++;
		if (run > longest) longest = run;
	}
	// One point at 2ᵏ − 1 is no evidence: a band top of ~16,000 counts hits 16,383 by chance
	// (seen in round trips), and refusing honest data is as wrong as fitting clipped data.
	if (fullScale && atMax >= 2) return max;
	// A window that is flat almost everywhere (a noise-free level) has no top to clip.
	if (atMax >= n / 2) return null;
	// Two neighbours of a Poisson top at N counts tie with probability ≈ 1/√(4πN) (difference of
	// two Poisson variables), so at a few hundred counts three equal points happen by chance about
	// once in 10⁴ windows; there a clipped top must show four.
	const tie = 1 / Math.sqrt(4 * Math.PI * Math.max(max, 1));
	if (longest >= 3 && (tie < 0.005 || longest >= 4)) return max;
	return null;
}

/**
 * Cosmic-ray spikes: runs of 1–3 points that jump above both neighbours by many standard
 * deviations AND whose edges are steep compared with their height above the local floor. The
 * second test is what spares real bands: a band sampled by ≥ 3 points per FWHM falls by at most
 * ~60 % from one point to the next near its top (Lorentzian or Gaussian, common practice for
 * slit-limited spectrometers), while a spike falls to the floor at once. Away from the expected
 * band positions bands narrower than ~2 points per FWHM may be taken for spikes; inside the band
 * zone only single points with a near-vertical edge are removed, which spares bands down to
 * ~1 point per FWHM (a 2–3-point cosmic ray right on the band is then left to the fit's χ²).
 */
export function findSpikes(
	y: Float64Array,
	usable: Uint8Array,
	sigma: number,
	readNoise2: number,
	bandZone?: Uint8Array
): SpikeEvent[] {
	const n = y.length;
	const events: SpikeEvent[] = [];
	const steepness = [0, 0.6, 0.6, 0.75];
	for (let pass = 0; pass < 3; pass++) {
		let found = 0;
		for (let i = 0; i < n; i++) {
			if (!usable[i]) continue;
			// Cheap pre-test: every run starting at i has runMin ≤ y[i] and a left neighbour y[i−1],
			// so without a big step up from y[i−1] no run here can be a spike.
			if (i > 0 && usable[i - 1]) {
				const l = y[i - 1];
				if (!(y[i] - l > sigma * Math.sqrt(2 * (Math.max(l, 1) + readNoise2)))) continue;
			}
			for (let w = 1; w <= 3; w++) {
				const end = i + w; // first point after the run
				if (end > n) break;
				let runOk = true;
				let runMin = Infinity;
				let runMax = -Infinity;
				for (let k = i; k < end; k++) {
					if (!usable[k]) runOk = false;
					if (y[k] < runMin) runMin = y[k];
					if (y[k] > runMax) runMax = y[k];
				}
				if (!runOk) break;
				const hasL = i > 0 && usable[i - 1] === 1;
				const hasR = end < n && usable[end] === 1;
				if (!hasL && !hasR) continue;
				const left = hasL ? y[i - 1] : -Infinity;
				const right = hasR ? y[end] : -Infinity;
				const neighbour = Math.max(left, right);
				const jump = runMin - neighbour;
				const sd = Math.sqrt(2 * (Math.max(neighbour, 1) + readNoise2));
				if (!(jump > sigma * sd)) continue;
				// Floor: lowest usable point within 4 points of the run on either side.
				let floor = Infinity;
				for (let k = Math.max(0, i - 4); k < Math.min(n, end + 4); k++) {
					if ((k < i || k >= end) && usable[k] && y[k] < floor) floor = y[k];
				}
				// Where a band is expected, a run of 2–3 points may be a whole undersampled band, so
				// only single points go, and only with a near-vertical edge: a band of ≥ 1 point
				// FWHM falls by at most ~80 % to its neighbours (Lorentzian; exact arithmetic).
				const zone = bandZone !== undefined && (bandZone[i] === 1 || bandZone[end - 1] === 1);
				if (zone && w > 1) continue;
				const steep = zone ? 0.85 : steepness[w];
				if (!(jump >= steep * (runMin - floor))) continue;
				events.push({ index: i, width: w, shift: NaN, height: runMax - neighbour });
				// Replace by the straight line between the neighbours so later steps see no hole.
				const a = hasL ? y[i - 1] : y[end];
				const b = hasR ? y[end] : y[i - 1];
				for (let k = i; k < end; k++) {
					y[k] = a + ((b - a) * (k - i + 1)) / (w + 1);
					usable[k] = 0;
				}
				found++;
				i = end - 1;
				break;
			}
		}
		if (found === 0) break;
	}
	return events;
}

/** Linear interpolation of (xs, ys) (xs ascending) at x; NaN outside the range. */
function interpolate(xs: Float64Array, ys: Float64Array, x: number): number {
	const n = xs.length;
	const tol = 1e-9 * Math.max(1, Math.abs(xs[0]), Math.abs(xs[n - 1]));
	if (x < xs[0] - tol || x > xs[n - 1] + tol) return NaN;
	if (x <= xs[0]) return ys[0];
	if (x >= xs[n - 1]) return ys[n - 1];
	let lo = 0;
	let hi = n - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (xs[mid] <= x) lo = mid;
		else hi = mid;
	}
	const t = (x - xs[lo]) / (xs[hi] - xs[lo]);
	return ys[lo] + t * (ys[hi] - ys[lo]);
}

/** Points within `half` of ±mode on this window's side. */
function bandMask(
	shift: Float64Array,
	side: 'stokes' | 'anti-stokes',
	modes: number[],
	half: number
) {
	const sign = side === 'stokes' ? 1 : -1;
	const mask = new Uint8Array(shift.length);
	for (let i = 0; i < shift.length; i++) {
		for (const m of modes) if (Math.abs(shift[i] - sign * Math.abs(m)) <= half) mask[i] = 1;
	}
	return mask;
}

export function prepareWindow(w: ShiftWindow, opts: PrepareOptions): PreparedResult {
	const n = w.shift.length;
	const side = SIDE_NAME[w.side];
	const flags: Flag[] = [];
	if (!(opts.exposureS > 0) || !Number.isFinite(opts.exposureS)) {
		throw new EngineError(
			'invalid-exposure',
			`${w.source}: the ${side} exposure must be a positive number of seconds (got ${opts.exposureS}).`,
			{ file: w.source }
		);
	}
	const raw = Float64Array.from(w.counts);
	const usable = new Uint8Array(n).fill(1);
	const inBandMask = bandMask(w.shift, w.side, opts.modes, opts.bandHalfWidthCm1 ?? 15);

	// 1. Saturation, on raw counts.
	const ceiling = opts.saturationCounts ?? findSaturation(raw);
	let saturated = 0;
	let saturatedInBand = 0;
	if (ceiling !== null) {
		for (let i = 0; i < n; i++) {
			if (raw[i] >= ceiling) {
				usable[i] = 0;
				saturated++;
				if (inBandMask[i]) saturatedInBand++;
			}
		}
	}
	if (saturatedInBand > 0 && !opts.allowSaturatedBand) {
		throw new EngineError(
			'saturated-band',
			`${w.source}: ${saturatedInBand} point${saturatedInBand === 1 ? '' : 's'} of the ${side} band sit at the detector ceiling (${ceiling} counts); a clipped band cannot give its area. Reduce the exposure or the laser power.`,
			{ file: w.source, row: w.rows[inBandMask.findIndex((m, i) => m === 1 && raw[i] >= ceiling!)] }
		);
	}
	if (saturated > 0) {
		flags.push({
			code: 'saturation',
			severity: saturatedInBand > 0 ? 'warning' : 'info',
			message:
				saturatedInBand > 0
					? `${saturatedInBand} clipped point${saturatedInBand === 1 ? '' : 's'} at the top of the ${side} band (ceiling ${ceiling} counts) were left out of the fit; the band area rests on its flanks.`
					: `${saturated} point${saturated === 1 ? '' : 's'} of the ${side} window at the detector ceiling (${ceiling} counts), away from the band, were left out.`
		});
	}

	// 2. Cosmic-ray spikes, on raw counts.
	const readNoise2 = (opts.readNoiseCounts ?? 0) ** 2;
	const spikes =
		opts.removeSpikes === false
			? []
			: findSpikes(raw, usable, opts.spikeSigma ?? 6, readNoise2, inBandMask);
	for (const s of spikes) s.shift = w.shift[s.index];

	// 3. Dark, interpolated on the file's own x; 4. exposure normalisation.
	const t = opts.exposureS;
	const rate = new Float64Array(n);
	const variance = new Float64Array(n);
	// Dark value and its own variance per point (counts); typed arrays, no per-point objects.
	let darkValue: Float64Array | null = null;
	let darkVariance: Float64Array | null = null;
	let darkConstant = 0;
	if (opts.dark?.kind === 'constant') {
		darkConstant = opts.dark.counts;
	} else if (opts.dark?.kind === 'spectrum') {
		const d = opts.dark.spectrum;
		const scale = opts.dark.exposureS ? t / opts.dark.exposureS : 1;
		// A dark frame catches cosmic rays too; clean it the same way before using it.
		const dy = Float64Array.from(d.y);
		findSpikes(dy, new Uint8Array(dy.length).fill(1), opts.spikeSigma ?? 6, readNoise2);
		darkValue = new Float64Array(n);
		darkVariance = new Float64Array(n);
		for (let i = 0; i < n; i++) {
			const v = interpolate(d.x, dy, w.fileX[i]);
			if (Number.isNaN(v)) {
				throw new EngineError(
					'dark-axis-mismatch',
					`${d.file}: the dark covers x = ${d.x[0]} … ${d.x[d.x.length - 1]} but the ${side} window (${w.source}) needs x = ${w.fileX[i]} (row ${w.rows[i]}); the dark must span the window on the same axis.`,
					{ file: d.file }
				);
			}
			darkValue[i] = v * scale;
			// Its own Poisson variance, scaled with it.
			darkVariance[i] = Math.max(v, 1) * scale * scale;
		}
	}
	const t2 = t * t;
	for (let i = 0; i < n; i++) {
		const dv = darkValue === null ? darkConstant : darkValue[i];
		const dvar = darkVariance === null ? 0 : darkVariance[i];
		rate[i] = (raw[i] - dv) / t;
		// Poisson variance of the raw counts (floored at 1 so an empty pixel keeps a finite weight),
		// plus the dark's own variance and read noise. An electronic offset in the raw counts makes
		// this slightly conservative.
		variance[i] = (Math.max(raw[i], 1) + dvar + readNoise2) / t2;
	}

	// 5. Fluorescence baseline, on request.
	let baseline: Float64Array | undefined;
	const b = opts.baseline ?? { kind: 'none' };
	if (b.kind !== 'none') {
		const exclude = bandMask(w.shift, w.side, opts.modes, b.excludeHalfWidthCm1 ?? 40);
		const fit =
			b.kind === 'polynomial'
				? polynomialBaseline(w.shift, rate, variance, usable, exclude, b.order ?? 3)
				: alsBaseline(rate, variance, usable, exclude, b.lambda ?? 1e5, b.p ?? 0.01);
		if (!fit) {
			throw new EngineError(
				'baseline-failed',
				`${w.source}: too few points away from the ${side} band to fit a ${b.kind} baseline; narrow the exclusion or widen the window.`,
				{ file: w.source }
			);
		}
		baseline = fit.value;
		for (let i = 0; i < n; i++) {
			rate[i] -= fit.value[i];
			variance[i] += fit.variance[i];
		}
	}

	if (spikes.length > 0) {
		flags.push({
			code: 'spikes-removed',
			severity: 'info',
			message: `${spikes.length} cosmic-ray spike${spikes.length === 1 ? '' : 's'} removed from the ${side} window (${w.source}).`
		});
	}

	return {
		window: {
			side: w.side,
			source: w.source,
			shift: Float64Array.from(w.shift),
			rate,
			variance,
			usable,
			exposureS: t,
			spikesRemoved: spikes.length,
			saturatedPoints: saturated
		},
		spikes,
		saturation: { ceiling, points: saturated, inBand: saturatedInBand > 0 },
		baseline,
		flags
	};
}

/**
 * Weighted least-squares polynomial through the points away from the bands (weights 1/variance).
 * Its own uncertainty at each point, gᵀ(XᵀWX)⁻¹g with g = (1, u, u², …), is added to that point's
 * variance so the band area's standard error includes the baseline's. (Neighbouring points share
 * this error, i.e. it is correlated; adding it point by point is the usual diagonal approximation,
 * and the band fit's own local linear baseline absorbs most of the correlated part.)
 */
export function polynomialBaseline(
	x: Float64Array,
	y: Float64Array,
	variance: Float64Array,
	usable: Uint8Array,
	exclude: Uint8Array,
	order: number
): { value: Float64Array; variance: Float64Array } | null {
	const n = x.length;
	const m = order + 1;
	// Scale x to [−1, 1] so the normal equations stay well conditioned.
	const x0 = (x[0] + x[n - 1]) / 2;
	const h = (x[n - 1] - x[0]) / 2 || 1;
	const a = new Float64Array(m * m);
	const r = new Float64Array(m);
	const g = new Float64Array(m);
	let used = 0;
	for (let i = 0; i < n; i++) {
		if (!usable[i] || exclude[i]) continue;
		used++;
		const wi = 1 / variance[i];
		const u = (x[i] - x0) / h;
		g[0] = 1;
		for (let j = 1; j < m; j++) g[j] = g[j - 1] * u;
		for (let j = 0; j < m; j++) {
			r[j] += wi * g[j] * y[i];
			for (let k = 0; k < m; k++) a[j * m + k] += wi * g[j] * g[k];
		}
	}
	if (used < 2 * m) return null;
	const cov = invertSpd(a, m);
	if (!cov) return null;
	const coef = new Float64Array(m);
	for (let j = 0; j < m; j++) for (let k = 0; k < m; k++) coef[j] += cov[j * m + k] * r[k];
	const value = new Float64Array(n);
	const vout = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		const u = (x[i] - x0) / h;
		g[0] = 1;
		for (let j = 1; j < m; j++) g[j] = g[j - 1] * u;
		let v = 0;
		let q = 0;
		for (let j = 0; j < m; j++) {
			v += coef[j] * g[j];
			for (let k = 0; k < m; k++) q += g[j] * cov[j * m + k] * g[k];
		}
		value[i] = v;
		vout[i] = q;
	}
	return { value, variance: vout };
}

/** Inverse of a small symmetric positive-definite matrix by Gauss–Jordan; null if singular. */
function invertSpd(a: Float64Array, m: number): Float64Array | null {
	const w = Float64Array.from(a);
	const inv = new Float64Array(m * m);
	for (let i = 0; i < m; i++) inv[i * m + i] = 1;
	for (let c = 0; c < m; c++) {
		let p = c;
		for (let rr = c + 1; rr < m; rr++) if (Math.abs(w[rr * m + c]) > Math.abs(w[p * m + c])) p = rr;
		if (!(Math.abs(w[p * m + c]) > 1e-300)) return null;
		for (let k = 0; k < m; k++) {
			[w[c * m + k], w[p * m + k]] = [w[p * m + k], w[c * m + k]];
			[inv[c * m + k], inv[p * m + k]] = [inv[p * m + k], inv[c * m + k]];
		}
		const d = w[c * m + c];
		for (let k = 0; k < m; k++) {
			w[c * m + k] /= d;
			inv[c * m + k] /= d;
		}
		for (let rr = 0; rr < m; rr++) {
			if (rr === c) continue;
			const f = w[rr * m + c];
			if (f === 0) continue;
			for (let k = 0; k < m; k++) {
				w[rr * m + k] -= f * w[c * m + k];
				inv[rr * m + k] -= f * inv[c * m + k];
			}
		}
	}
	return inv;
}

/**
 * Asymmetric least squares (Eilers & Boelens' Whittaker smoother with asymmetric weights, common
 * practice for fluorescence): minimise Σ wᵢ(yᵢ − zᵢ)² + λ Σ (Δ²z)², with wᵢ = p above the current
 * z and 1 − p below, and wᵢ = 0 on the bands and masked points so they cannot pull z up.
 * Variance kept honest by a bound: for a linear smoother z = Hy with H's eigenvalues in [0, 1],
 * var(zᵢ) = Σⱼ Hᵢⱼ²σⱼ² ≤ Hᵢᵢ·max σ², and the equivalent kernel of this penalty has
 * Hᵢᵢ ≈ 1/(2√2·(λ/w̄)^¼) (Silverman's kernel for the second-difference smoother) with w̄ the mean
 * weight of the points that carried the fit. We add Hᵢᵢ·σ̄ᵢ² with σ̄² a local mean of the background
 * variance (the band's own shot noise is not the baseline's).
 */
export function alsBaseline(
	y: Float64Array,
	variance: Float64Array,
	usable: Uint8Array,
	exclude: Uint8Array,
	lambda: number,
	p: number
): { value: Float64Array; variance: Float64Array } | null {
	const n = y.length;
	let free = 0;
	for (let i = 0; i < n; i++) if (usable[i] && !exclude[i]) free++;
	if (free < 10) return null;
	const wts = new Float64Array(n);
	for (let i = 0; i < n; i++) wts[i] = usable[i] && !exclude[i] ? 1 : 0;
	const z = new Float64Array(n);
	// Pentadiagonal system (W + λDᵀD) z = W y, banded Cholesky with bandwidth 2.
	const d0 = new Float64Array(n);
	const d1 = new Float64Array(n);
	const d2 = new Float64Array(n);
	const rhs = new Float64Array(n);
	for (let iter = 0; iter < 10; iter++) {
		for (let i = 0; i < n; i++) {
			// Diagonals of DᵀD for the second difference: 1,5,6,…,6,5,1 / −2,−4,…,−4,−2 / 1.
			const c0 = i === 0 || i === n - 1 ? 1 : i === 1 || i === n - 2 ? 5 : 6;
			d0[i] = wts[i] + lambda * c0;
			d1[i] = i < n - 1 ? lambda * (i === 0 || i === n - 2 ? -2 : -4) : 0;
			d2[i] = i < n - 2 ? lambda : 0;
			rhs[i] = wts[i] * y[i];
		}
		if (!bandedCholeskySolve(d0, d1, d2, rhs, z)) return null;
		let changed = 0;
		for (let i = 0; i < n; i++) {
			if (!usable[i] || exclude[i]) continue;
			const nw = y[i] > z[i] ? p : 1 - p;
			if (nw !== wts[i]) changed++;
			wts[i] = nw;
		}
		if (changed === 0 && iter > 0) break;
	}
	// The asymmetric weights leave z near the lower edge of the noise, biased low by about one σ;
	// lift it by the median standardised residual of the points that carried the fit.
	const std: number[] = [];
	for (let i = 0; i < n; i++) {
		if (usable[i] && !exclude[i]) std.push((y[i] - z[i]) / Math.sqrt(variance[i]));
	}
	std.sort((a, b) => a - b);
	const lift = std[std.length >> 1];
	// The noise of the BACKGROUND at each point: the variance of the points that carried the fit,
	// carried linearly across the bands and masked points. The points' own variance there holds
	// the band's shot noise, and lifting by it would raise the baseline in the band's shape.
	const vb = backgroundVariance(variance, usable, exclude);
	for (let i = 0; i < n; i++) z[i] += lift * Math.sqrt(vb[i]);
	let wsum = 0;
	let wcount = 0;
	for (let i = 0; i < n; i++) {
		if (wts[i] > 0) {
			wsum += wts[i];
			wcount++;
		}
	}
	const wbar = wsum / Math.max(wcount, 1);
	const hii = Math.min(1, 1 / (2 * Math.SQRT2 * Math.pow(lambda / wbar, 0.25)));
	const out = new Float64Array(n);
	const half = 10;
	let acc = 0;
	let cnt = 0;
	// Running mean of the background variance over ±10 points.
	for (let i = 0; i < Math.min(n, half); i++) {
		acc += vb[i];
		cnt++;
	}
	for (let i = 0; i < n; i++) {
		const add = i + half;
		if (add < n) {
			acc += vb[add];
			cnt++;
		}
		const drop = i - half - 1;
		if (drop >= 0) {
			acc -= vb[drop];
			cnt--;
		}
		out[i] = hii * (acc / cnt);
	}
	return { value: z, variance: out };
}

/** Variance of the points with usable && !exclude; elsewhere linear between the nearest such points. */
function backgroundVariance(
	variance: Float64Array,
	usable: Uint8Array,
	exclude: Uint8Array
): Float64Array {
	const n = variance.length;
	const out = new Float64Array(n);
	let prev = -1;
	for (let i = 0; i <= n; i++) {
		const fitted = i < n && usable[i] === 1 && exclude[i] === 0;
		if (!fitted && i < n) continue;
		const vi = i < n ? variance[i] : prev >= 0 ? variance[prev] : 0;
		const vp = prev >= 0 ? variance[prev] : vi;
		for (let k = prev + 1; k < i; k++) out[k] = vp + ((vi - vp) * (k - prev)) / (i - prev);
		if (i < n) out[i] = vi;
		prev = i;
	}
	return out;
}

/** Solve a symmetric pentadiagonal system given by its diagonals (LDLᵀ, no allocation per row). */
function bandedCholeskySolve(
	a0: Float64Array,
	a1: Float64Array,
	a2: Float64Array,
	b: Float64Array,
	x: Float64Array
): boolean {
	const n = a0.length;
	// L has unit diagonal and sub-diagonals l1, l2; D diagonal. Reuse a0/a1/a2 in place.
	for (let i = 0; i < n; i++) {
		let d = a0[i];
		if (i >= 1) d -= a1[i - 1] * a1[i - 1] * a0[i - 1];
		if (i >= 2) d -= a2[i - 2] * a2[i - 2] * a0[i - 2];
		if (!(d > 0)) return false;
		a0[i] = d;
		if (i < n - 1) {
			let e = a1[i];
			if (i >= 1) e -= a2[i - 1] * a1[i - 1] * a0[i - 1];
			a1[i] = e / d;
		}
		if (i < n - 2) a2[i] = a2[i] / d;
	}
	for (let i = 0; i < n; i++) {
		let v = b[i];
		if (i >= 1) v -= a1[i - 1] * x[i - 1];
		if (i >= 2) v -= a2[i - 2] * x[i - 2];
		x[i] = v;
	}
	for (let i = 0; i < n; i++) x[i] /= a0[i];
	for (let i = n - 1; i >= 0; i--) {
		let v = x[i];
		if (i < n - 1) v -= a1[i] * x[i + 1];
		if (i < n - 2) v -= a2[i] * x[i + 2];
		x[i] = v;
	}
	return true;
}
