/**
 * The default estimator: both windows fitted at once, with the temperature itself a parameter.
 *
 *   Stokes band:       area S,                     centre +ν̃m + δ
 *   anti-Stokes band:  area S · C ρ(ν̃m)ⁿ e^(−c₂ν̃m/T),  centre −ν̃m + δ
 *
 * sharing |shift| ν̃m, FWHM (and η), and one axis offset δ (the laser line sits a few cm⁻¹ off
 * zero on real instruments, which moves both bands the same way). Each window keeps its own
 * straight baseline. C is held fixed; its uncertainty enters the budget analytically.
 * Because every pixel of both bands informs T directly, u(T) from the covariance approaches the
 * shot-noise limit of physics.md §2.3.
 */
import { C2_CM_K } from './constants';
import { reweight, type BandRegion } from './band-fit';
import { peakHeight, profile, shapeCode, type ShapeCode } from './lineshapes';
import { levenbergMarquardt, type LeastSquaresModel, type LMResult } from './levenberg-marquardt';
import type { FittedBand, Lineshape } from './types';

/** Bound once: some loaders (tsx's CJS interop) turn imported names into getters, costly per point. */
const bandProfile = profile;

/** Parameter layout. η (pseudo-Voigt only) is last so the others keep their places. */
export const P_AREA = 0;
export const P_T = 1;
export const P_SHIFT = 2;
export const P_FWHM = 3;
export const P_OFFSET = 4;
export const P_A_S = 5;
export const P_B_S = 6;
export const P_A_AS = 7;
export const P_B_AS = 8;
export const P_ETA = 9;

export interface JointStart {
	stokesArea: number;
	temperatureK: number;
	shiftCm1: number;
	fwhmCm1: number;
	offsetCm1: number;
	eta: number;
	stokesBaseline: { a: number; b: number };
	antiStokesBaseline: { a: number; b: number };
}

export interface JointFitInput {
	stokes: BandRegion;
	antiStokes: BandRegion;
	lineshape: Lineshape;
	laserCm1: number;
	exponent: 3 | 4;
	/**
	 * How the anti-Stokes/Stokes area ratio depends on T: directly through C ρⁿ e^(−c₂ν/T), or
	 * through a reference pair, R₀ e^(c₂ν(1/T₀ − 1/T)), in which ρⁿ cancels exactly.
	 */
	factor: { kind: 'direct'; c: number } | { kind: 'reference'; r0: number; t0: number };
	start: JointStart;
	/** Poisson reweighting passes (default 1: the regions arrive with model weights from the band fits). */
	reweightPasses?: number;
}

export interface JointFitResult {
	temperatureK: number;
	uTemperatureK: number;
	shiftCm1: number;
	uShiftCm1: number;
	offsetCm1: number;
	uOffsetCm1: number;
	/** Fitted anti-Stokes/Stokes area ratio R = C ρⁿ e^(−c₂ν̃m/T) and its u from u(T). */
	ratio: number;
	uRatio: number;
	stokes: FittedBand;
	antiStokes: FittedBand;
	reducedChi2: number;
	converged: boolean;
	/** T was pushed to a bound: the anti-Stokes band carries no usable information. */
	atBound: boolean;
	fit: LMResult;
}

export class JointModel implements LeastSquaresModel {
	readonly nParams: number;
	readonly nPoints: number;
	private readonly d = new Float64Array(3);
	private readonly shape: ShapeCode;
	/** Q = amp · ρ(ν)^n · exp(c₂ν(invT0 − 1/T)) */
	private readonly amp: number;
	private readonly n: number;
	private readonly invT0: number;
	constructor(
		private readonly s: BandRegion,
		private readonly as: BandRegion,
		lineshape: Lineshape,
		private readonly laser: number,
		exponent: number,
		factor: JointFitInput['factor']
	) {
		this.shape = shapeCode(lineshape);
		this.amp = factor.kind === 'direct' ? factor.c : factor.r0;
		this.n = factor.kind === 'direct' ? exponent : 0;
		this.invT0 = factor.kind === 'direct' ? 0 : 1 / factor.t0;
		this.nParams = lineshape === 'pseudo-voigt' ? 10 : 9;
		this.nPoints = s.n + as.n;
		// Stokes rows do not depend on T or the anti-Stokes baseline, and the reverse.
		const np = this.nParams;
		const lo = new Int32Array(np);
		const hi = new Int32Array(np).fill(this.nPoints);
		lo[P_T] = lo[P_A_AS] = lo[P_B_AS] = s.n;
		hi[P_A_S] = hi[P_B_S] = s.n;
		this.columnLo = lo;
		this.columnHi = hi;
	}
	readonly columnLo: Int32Array;
	readonly columnHi: Int32Array;
	/** Anti-Stokes/Stokes area factor Q = C ρⁿ e^(−c₂ν/T). */
	factor(t: number, nu: number): number {
		return (
			this.amp *
			Math.pow((this.laser + nu) / (this.laser - nu), this.n) *
			Math.exp(C2_CM_K * nu * (this.invT0 - 1 / t))
		);
	}
	/** ∂ln Q/∂ν = n·2ν̃L/(ν̃L² − ν²) + c₂(1/T₀ − 1/T). */
	dlnQdNu(t: number, nu: number): number {
		return (
			(this.n * 2 * this.laser) / (this.laser * this.laser - nu * nu) +
			C2_CM_K * (this.invT0 - 1 / t)
		);
	}
	evaluate(p: Float64Array, f: Float64Array, jac: Float64Array | null): void {
		const np = this.nParams;
		const eta = np === 10 ? p[P_ETA] : 0.5;
		const area = p[P_AREA];
		const t = p[P_T];
		const nu = p[P_SHIFT];
		const w = p[P_FWHM];
		const off = p[P_OFFSET];
		const d = jac ? this.d : null;
		const N = this.nPoints;
		// Stokes window
		const s = this.s;
		const cs = nu + off;
		for (let i = 0; i < s.n; i++) {
			const g = bandProfile(this.shape, s.x[i], cs, w, eta, d) * s.dx[i];
			const xr = s.x[i] - s.xref;
			f[i] = area * g + p[P_A_S] + p[P_B_S] * xr;
			if (jac && d) {
				const ad = area * s.dx[i];
				jac[P_AREA * N + i] = g;
				jac[P_T * N + i] = 0;
				jac[P_SHIFT * N + i] = ad * d[0];
				jac[P_FWHM * N + i] = ad * d[1];
				jac[P_OFFSET * N + i] = ad * d[0];
				jac[P_A_S * N + i] = 1;
				jac[P_B_S * N + i] = xr;
				jac[P_A_AS * N + i] = 0;
				jac[P_B_AS * N + i] = 0;
				if (np === 10) jac[P_ETA * N + i] = ad * d[2];
			}
		}
		// anti-Stokes window
		const a = this.as;
		const q = this.factor(t, nu);
		const aas = area * q;
		const ca = -nu + off;
		const dlnQdNu = this.dlnQdNu(t, nu);
		// ∂ln Q/∂T = c₂ν/T²
		const dlnQdT = (C2_CM_K * nu) / (t * t);
		for (let i = 0; i < a.n; i++) {
			const g = bandProfile(this.shape, a.x[i], ca, w, eta, d) * a.dx[i];
			const xr = a.x[i] - a.xref;
			const band = aas * g;
			f[s.n + i] = band + p[P_A_AS] + p[P_B_AS] * xr;
			if (jac && d) {
				const ad = aas * a.dx[i];
				jac[P_AREA * N + s.n + i] = q * g;
				jac[P_T * N + s.n + i] = band * dlnQdT;
				jac[P_SHIFT * N + s.n + i] = band * dlnQdNu - ad * d[0];
				jac[P_FWHM * N + s.n + i] = ad * d[1];
				jac[P_OFFSET * N + s.n + i] = ad * d[0];
				jac[P_A_S * N + s.n + i] = 0;
				jac[P_B_S * N + s.n + i] = 0;
				jac[P_A_AS * N + s.n + i] = 1;
				jac[P_B_AS * N + s.n + i] = xr;
				if (np === 10) jac[P_ETA * N + s.n + i] = ad * d[2];
			}
		}
	}
}

const T_MIN = 1;
const T_MAX = 1e5;

export function jointFit(input: JointFitInput): JointFitResult {
	const { stokes: s, antiStokes: a, lineshape } = input;
	const pv = lineshape === 'pseudo-voigt';
	const model = new JointModel(s, a, lineshape, input.laserCm1, input.exponent, input.factor);
	const st = input.start;
	const p0 = [
		st.stokesArea,
		Math.min(Math.max(st.temperatureK, 20), 20000),
		st.shiftCm1,
		st.fwhmCm1,
		st.offsetCm1,
		st.stokesBaseline.a + st.stokesBaseline.b * (s.xref - (st.shiftCm1 + st.offsetCm1)),
		st.stokesBaseline.b,
		st.antiStokesBaseline.a + st.antiStokesBaseline.b * (a.xref - (-st.shiftCm1 + st.offsetCm1)),
		st.antiStokesBaseline.b
	];
	if (pv) p0.push(Math.min(Math.max(st.eta, 0), 1));
	const np = model.nParams;
	const lower = new Float64Array(np).fill(-Infinity);
	const upper = new Float64Array(np).fill(Infinity);
	lower[P_T] = T_MIN;
	upper[P_T] = T_MAX;
	lower[P_SHIFT] = Math.max(st.shiftCm1 - 3 * st.fwhmCm1 - 5, 1);
	upper[P_SHIFT] = Math.min(st.shiftCm1 + 3 * st.fwhmCm1 + 5, input.laserCm1 * 0.999);
	lower[P_FWHM] = 0.05;
	upper[P_FWHM] = Math.max(5 * st.fwhmCm1, 10);
	if (pv) {
		lower[P_ETA] = 0;
		upper[P_ETA] = 1;
	}
	const y = new Float64Array(model.nPoints);
	y.set(s.y, 0);
	y.set(a.y, s.n);
	const weights = new Float64Array(model.nPoints);
	const gather = () => {
		weights.set(s.weights, 0);
		weights.set(a.weights, s.n);
	};
	gather();
	const lmOpts = { lower, upper, chi2Abs: 1e-4, ftol: 1e-12 };
	const passes = input.reweightPasses ?? 1;
	let fit = levenbergMarquardt(model, y, weights, p0, { ...lmOpts, covariance: passes === 0 });
	const f = new Float64Array(model.nPoints);
	for (let pass = 0; pass < passes; pass++) {
		model.evaluate(fit.params, f, null);
		reweight(s, f, 0);
		reweight(a, f, s.n);
		gather();
		fit = levenbergMarquardt(model, y, weights, fit.params, {
			...lmOpts,
			covariance: pass === passes - 1
		});
	}
	model.evaluate(fit.params, f, null);

	const p = fit.params;
	const cov = fit.covariance;
	const cv = (i: number, j: number) => cov[i * np + j];
	const t = p[P_T];
	const nu = p[P_SHIFT];
	const uT = Math.sqrt(Math.max(cv(P_T, P_T), 0));
	const q = model.factor(t, nu);
	const ratio = q;
	const dlnQdT = (C2_CM_K * nu) / (t * t);
	const dlnQdNu = model.dlnQdNu(t, nu);
	// R is a function of T (and ν, whose own uncertainty is reported separately), so u(R)/R = (c₂ν/T²)·u(T).
	const uRatio = ratio * dlnQdT * uT;
	const eta = pv ? p[P_ETA] : 0.5;

	// u of the anti-Stokes area S·Q(ν, T) from the covariance of (S, T, ν)
	const aas = p[P_AREA] * q;
	const gvec = [q, aas * dlnQdT, aas * dlnQdNu];
	const ids = [P_AREA, P_T, P_SHIFT];
	let varAas = 0;
	for (let i = 0; i < 3; i++)
		for (let j = 0; j < 3; j++) varAas += gvec[i] * gvec[j] * cv(ids[i], ids[j]);
	const varCs = cv(P_SHIFT, P_SHIFT) + cv(P_OFFSET, P_OFFSET) + 2 * cv(P_SHIFT, P_OFFSET);
	const varCa = cv(P_SHIFT, P_SHIFT) + cv(P_OFFSET, P_OFFSET) - 2 * cv(P_SHIFT, P_OFFSET);

	const sideChi2 = (r: BandRegion, off: number) => {
		let c2 = 0;
		for (let i = 0; i < r.n; i++) {
			const d = r.y[i] - f[off + i];
			c2 += r.weights[i] * d * d;
		}
		// The shared parameters are split between the sides; each side owns its two baseline terms.
		return c2 / Math.max(r.n - 2 - (np - 4) / 2, 1);
	};
	const pixel = (r: BandRegion) => (r.n > 1 ? Math.abs(r.x[r.n - 1] - r.x[0]) / (r.n - 1) : 1);
	const mk = (side: 'stokes' | 'anti-stokes'): FittedBand => {
		const st = side === 'stokes';
		const r = st ? s : a;
		const centre = st ? nu + p[P_OFFSET] : -nu + p[P_OFFSET];
		const area = st ? p[P_AREA] : aas;
		const ia = st ? P_A_S : P_A_AS;
		const ib = st ? P_B_S : P_B_AS;
		const band: FittedBand = {
			side,
			center_cm1: centre,
			u_center_cm1: Math.sqrt(Math.max(st ? varCs : varCa, 0)),
			fwhm_cm1: p[P_FWHM],
			u_fwhm_cm1: Math.sqrt(Math.max(cv(P_FWHM, P_FWHM), 0)),
			area,
			u_area: st ? Math.sqrt(Math.max(cv(P_AREA, P_AREA), 0)) : Math.sqrt(Math.max(varAas, 0)),
			height: peakHeight(lineshape, area, p[P_FWHM], eta) * pixel(r),
			baseline: { a: p[ia] + p[ib] * (centre - r.xref), b: p[ib] },
			reduced_chi2: sideChi2(r, st ? 0 : s.n),
			points: r.n
		};
		if (pv) band.eta = eta;
		return band;
	};

	return {
		temperatureK: t,
		uTemperatureK: uT,
		shiftCm1: nu,
		uShiftCm1: Math.sqrt(Math.max(cv(P_SHIFT, P_SHIFT), 0)),
		offsetCm1: p[P_OFFSET],
		uOffsetCm1: Math.sqrt(Math.max(cv(P_OFFSET, P_OFFSET), 0)),
		ratio,
		uRatio,
		stokes: mk('stokes'),
		antiStokes: mk('anti-stokes'),
		reducedChi2: fit.reducedChi2,
		converged: fit.converged,
		atBound: t <= T_MIN * 1.0001 || t >= T_MAX * 0.9999,
		fit
	};
}
