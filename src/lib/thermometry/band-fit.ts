/**
 * One band in one window: area × profile on a local straight baseline, fitted on the band region
 * only (a few FWHM either side), with Poisson weights.
 *
 * Two details matter for an unbiased area:
 *  - Rates are per PIXEL, so the band's per-pixel rate is area · profile(x) · Δx with Δx the local
 *    pixel width. The area is then the band's photon rate (counts/s summed over the band), which
 *    does not depend on the pixel width of the window (physics.md §5, "integrating on the wrong axis").
 *  - Weights 1/observed-variance bias a low-count area downwards (Neyman's χ²). We therefore
 *    refit with the variance the model predicts (iteratively reweighted least squares); its fixed
 *    point solves the Poisson likelihood equations.
 */
import { areaFromHeight, peakHeight, profile, shapeCode, type ShapeCode } from './lineshapes';
import { levenbergMarquardt, type LeastSquaresModel, type LMResult } from './levenberg-marquardt';
import type { FittedBand, Lineshape, PreparedWindow } from './types';

/** Bound once: some loaders (tsx's CJS interop) turn imported names into getters, costly per point. */
const bandProfile = profile;

/** The fitted points of one window: copies of the usable points in [lo, hi]. */
export interface BandRegion {
	side: PreparedWindow['side'];
	n: number;
	x: Float64Array;
	y: Float64Array;
	/** Local pixel width, cm⁻¹. */
	dx: Float64Array;
	/** Variance not explained by the signal's own shot noise (dark, read noise), (counts/s)². */
	extra: Float64Array;
	weights: Float64Array;
	exposureS: number;
	/** Reference abscissa of the linear baseline a + b·(x − xref). */
	xref: number;
	/** Masked (spike or saturated) points that fell inside the region. */
	masked: number;
}

/** First index with shift[i] ≥ x (the axis is ascending). */
export function lowerBound(shift: Float64Array, x: number): number {
	let lo = 0;
	let hi = shift.length;
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (shift[mid] < x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

/** Usable points of a window with lo ≤ shift ≤ hi. */
export function extractRegion(w: PreparedWindow, lo: number, hi: number, xref: number): BandRegion {
	const s = w.shift;
	const last = s.length - 1;
	const i0 = lowerBound(s, lo);
	let i1 = i0;
	let n = 0;
	let masked = 0;
	while (i1 <= last && s[i1] <= hi) {
		if (w.usable[i1]) n++;
		else masked++;
		i1++;
	}
	const r: BandRegion = {
		side: w.side,
		n,
		x: new Float64Array(n),
		y: new Float64Array(n),
		dx: new Float64Array(n),
		extra: new Float64Array(n),
		weights: new Float64Array(n),
		exposureS: w.exposureS,
		xref,
		masked
	};
	const t = w.exposureS > 0 ? w.exposureS : 1;
	const floor = 1 / (t * t);
	let k = 0;
	for (let i = i0; i < i1; i++) {
		if (!w.usable[i]) continue;
		const left = i > 0 ? s[i - 1] : 2 * s[i] - s[i + 1];
		const right = i < last ? s[i + 1] : 2 * s[i] - s[i - 1];
		r.x[k] = s[i];
		r.y[k] = w.rate[i];
		r.dx[k] = (right - left) / 2;
		const v = w.variance[i];
		// variance = (N + var_dark)/t² and rate = (N − dark)/t, so variance − rate/t is the non-signal part.
		r.extra[k] = Number.isFinite(v) ? Math.max(v - w.rate[i] / t, 0) : 0;
		r.weights[k] = 1 / Math.max(Number.isFinite(v) ? v : 0, floor);
		k++;
	}
	return r;
}

/** Poisson weights from the model's predicted rate: 1/(f/t + extra), at least one count's worth. */
export function reweight(r: BandRegion, f: Float64Array, offset = 0): void {
	const t = r.exposureS > 0 ? r.exposureS : 1;
	const floor = 1 / (t * t);
	for (let i = 0; i < r.n; i++) {
		const v = Math.max(f[offset + i], 0) / t + r.extra[i];
		r.weights[i] = 1 / Math.max(v, floor);
	}
}

export interface BandFitOptions {
	lineshape: Lineshape;
	/** Where to look for the band, cm⁻¹ on the window's axis (negative for anti-Stokes). */
	expectedCentre: number;
	/** Half width of the search for the maximum, cm⁻¹. */
	searchCm1?: number;
	/** Hold the shape (centre, FWHM, η) at these values and fit only area and baseline. */
	fixShape?: { centre: number; fwhm: number; eta: number };
	/** Fit region to use instead of the automatic one. */
	region?: { lo: number; hi: number };
	/** Number of Poisson reweighting passes after the first fit (default 1). */
	reweightPasses?: number;
}

export interface BandFitResult {
	band: FittedBand;
	/** The fitted model's rates on the region's points (counts/s per pixel). */
	model: Float64Array;
	converged: boolean;
	fit: LMResult;
	region: BandRegion;
	lo: number;
	hi: number;
}

/** Parameters: 0 area, 1 centre, 2 FWHM, 3 baseline a (at xref), 4 baseline slope b, [5 η]. */
export class SingleBandModel implements LeastSquaresModel {
	readonly nParams: number;
	readonly nPoints: number;
	private readonly d = new Float64Array(3);
	constructor(
		private readonly r: BandRegion,
		private readonly shape: ShapeCode,
		pseudoVoigt: boolean
	) {
		this.nParams = pseudoVoigt ? 6 : 5;
		this.nPoints = r.n;
	}
	evaluate(p: Float64Array, f: Float64Array, jac: Float64Array | null): void {
		const { x, dx, xref } = this.r;
		const np = this.nParams;
		const eta = np === 6 ? p[5] : 0.5;
		const d = jac ? this.d : null;
		for (let i = 0; i < this.nPoints; i++) {
			const g = bandProfile(this.shape, x[i], p[1], p[2], eta, d) * dx[i];
			const xr = x[i] - xref;
			f[i] = p[0] * g + p[3] + p[4] * xr;
			if (jac && d) {
				const n = this.nPoints;
				const ad = p[0] * dx[i];
				jac[i] = g;
				jac[n + i] = ad * d[0];
				jac[2 * n + i] = ad * d[1];
				jac[3 * n + i] = 1;
				jac[4 * n + i] = xr;
				if (np === 6) jac[5 * n + i] = ad * d[2];
			}
		}
	}
}

/** Starting values from the data: a rough straight baseline, the maximum above it, and its half-width. */
export function startingValues(
	w: PreparedWindow,
	lineshape: Lineshape,
	expected: number,
	search: number
): { centre: number; fwhm: number; area: number; a: number; b: number; pixel: number } {
	const s = w.shift;
	const i0 = lowerBound(s, expected - search);
	const i1 = lowerBound(s, expected + search + 1e-12);
	const idx = new Int32Array(Math.max(i1 - i0, 0));
	let n = 0;
	for (let i = i0; i < i1; i++) if (w.usable[i]) idx[n++] = i;
	const pixel = n > 1 ? (s[idx[n - 1]] - s[idx[0]]) / (n - 1) : 1;
	if (n < 5) return { centre: expected, fwhm: 4, area: 0, a: 0, b: 0, pixel };
	// Baseline through the mean of the outer tenth on each side (spikes are already masked).
	const m = Math.max(2, Math.floor(n / 10));
	let xl = 0;
	let yl = 0;
	let xh = 0;
	let yh = 0;
	for (let k = 0; k < m; k++) {
		xl += s[idx[k]];
		yl += w.rate[idx[k]];
		xh += s[idx[n - 1 - k]];
		yh += w.rate[idx[n - 1 - k]];
	}
	xl /= m;
	yl /= m;
	xh /= m;
	yh /= m;
	const b = (yh - yl) / (xh - xl || 1);
	// Three-point smoothing so a single noisy pixel does not win.
	const sm = new Float64Array(n);
	for (let k = 0; k < n; k++) {
		const lo = idx[k > 0 ? k - 1 : 0];
		const hi = idx[k < n - 1 ? k + 1 : n - 1];
		const i = idx[k];
		sm[k] = (w.rate[lo] + w.rate[i] + w.rate[hi]) / 3 - (yl + b * (s[i] - xl));
	}
	let best = 0;
	for (let k = 1; k < n; k++) if (sm[k] > sm[best]) best = k;
	const height = sm[best];
	let kl = best;
	while (kl > 0 && sm[kl] > height / 2) kl--;
	let kr = best;
	while (kr < n - 1 && sm[kr] > height / 2) kr++;
	const fwhm = Math.min(Math.max(s[idx[kr]] - s[idx[kl]], 2 * Math.abs(pixel)), search);
	const centre = s[idx[best]];
	// rate per pixel = area·profile·Δx ⇒ area = height/(peak profile·Δx)
	const area = height > 0 ? areaFromHeight(lineshape, height, fwhm) / Math.abs(pixel) : 0;
	return { centre, fwhm, area, a: yl + b * (centre - xl), b, pixel: Math.abs(pixel) };
}

/** Half width of the fitted region around a band of this FWHM: enough baseline on both sides. */
export function regionHalfWidth(fwhm: number): number {
	return Math.min(Math.max(5 * fwhm, 10), 200);
}

export function fitBand(w: PreparedWindow, opts: BandFitOptions): BandFitResult {
	const pv = opts.lineshape === 'pseudo-voigt';
	const search = opts.searchCm1 ?? 25;
	const sv = startingValues(
		w,
		opts.lineshape,
		opts.fixShape?.centre ?? opts.expectedCentre,
		search
	);
	const centre0 = opts.fixShape?.centre ?? sv.centre;
	const fwhm0 = opts.fixShape?.fwhm ?? sv.fwhm;
	const eta0 = opts.fixShape?.eta ?? 0.5;
	const half = regionHalfWidth(fwhm0);
	const lo = opts.region?.lo ?? centre0 - half;
	const hi = opts.region?.hi ?? centre0 + half;
	const region = extractRegion(w, lo, hi, centre0);
	const model = new SingleBandModel(region, shapeCode(opts.lineshape), pv);
	const start = [sv.area, centre0, fwhm0, sv.a, sv.b];
	if (pv) start.push(eta0);
	const fixed = opts.fixShape !== undefined;
	const free = pv ? [1, +!fixed, +!fixed, 1, 1, +!fixed] : [1, +!fixed, +!fixed, 1, 1];
	const lower = [-Infinity, lo, 0.3 * sv.pixel, -Infinity, -Infinity, 0];
	const upper = [Infinity, hi, Math.max(5 * fwhm0, 10), Infinity, Infinity, 1];
	const lmOpts = { free, lower, upper, chi2Abs: 1e-4, ftol: 1e-12 };
	const passes = opts.reweightPasses ?? 1;
	let fit = levenbergMarquardt(model, region.y, region.weights, start, {
		...lmOpts,
		covariance: passes === 0
	});
	const f = new Float64Array(region.n);
	for (let pass = 0; pass < passes; pass++) {
		model.evaluate(fit.params, f, null);
		reweight(region, f);
		fit = levenbergMarquardt(model, region.y, region.weights, fit.params, {
			...lmOpts,
			covariance: pass === passes - 1
		});
	}
	const p = fit.params;
	model.evaluate(p, f, null);
	const c = fit.covariance;
	const np = model.nParams;
	const sd = (j: number) => Math.sqrt(Math.max(c[j * np + j], 0));
	const eta = pv ? p[5] : undefined;
	const band: FittedBand = {
		side: w.side,
		center_cm1: p[1],
		u_center_cm1: sd(1),
		fwhm_cm1: p[2],
		u_fwhm_cm1: sd(2),
		area: p[0],
		u_area: sd(0),
		height: peakHeight(opts.lineshape, p[0], p[2], eta ?? 0.5) * Math.abs(sv.pixel),
		baseline: { a: p[3] + p[4] * (p[1] - centre0), b: p[4] },
		reduced_chi2: fit.reducedChi2,
		points: region.n
	};
	if (pv) band.eta = eta;
	return { band, model: f, converged: fit.converged && region.n > np, fit, region, lo, hi };
}
