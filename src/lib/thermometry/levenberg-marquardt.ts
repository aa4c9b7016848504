/**
 * Weighted nonlinear least squares by Levenberg–Marquardt: minimise χ² = Σ wᵢ (yᵢ − fᵢ(p))².
 *
 * Why our own and not ml-levenberg-marquardt in the hot path: that package differentiates
 * numerically (one extra model pass per parameter), returns no covariance, and counts a fit as
 * converged only when the SSR falls below an ABSOLUTE tolerance, so a noisy fit always runs to
 * maxIterations (toolchain.md). We need analytic Jacobians, relative convergence tests, the
 * covariance (JᵀWJ)⁻¹ for band-area and temperature uncertainties, and thousands of fits a second.
 * The package is still used in the tests as an outside cross-check.
 *
 * Marquardt's scaled damping, (JᵀWJ + λ·diag(JᵀWJ)) δ = JᵀW r, solved by Cholesky. All work
 * arrays are allocated once per fit; the loops over points allocate nothing.
 */

export interface LeastSquaresModel {
	readonly nParams: number;
	readonly nPoints: number;
	/**
	 * Model values at `p` into `f`. When `jac` is given, also ∂fᵢ/∂pⱼ into jac[j·nPoints + i]
	 * (column-major: one column per parameter). Must not allocate per point.
	 */
	evaluate(p: Float64Array, f: Float64Array, jac: Float64Array | null): void;
}

export interface LMOptions {
	maxIterations?: number;
	/** Initial damping. */
	lambda?: number;
	/** Stop when χ² falls by less than this fraction in an accepted step. */
	ftol?: number;
	/**
	 * Stop when χ² falls by less than this absolute amount. With true (Poisson) weights a fall of
	 * 1e-6 moves the parameters by ~1e-3 of their standard errors, which no one can see.
	 */
	chi2Abs?: number;
	/** Stop when every accepted step changes its parameter by less than this fraction. */
	xtol?: number;
	lower?: ArrayLike<number>;
	upper?: ArrayLike<number>;
	/** 1 = free, 0 = held at its starting value. */
	free?: ArrayLike<number>;
	/**
	 * Scale the covariance by s² = χ²/(N−p). Right when the weights are only relative (NIST StRD,
	 * unknown σ). Wrong with Poisson weights, whose absolute size is known: there the unscaled
	 * (JᵀWJ)⁻¹ is the covariance and the reduced χ² is a goodness-of-fit check instead.
	 */
	scaleCovariance?: boolean;
}

export interface LMResult {
	params: Float64Array;
	/** Row-major nParams × nParams; NaN when JᵀWJ is singular at the solution. */
	covariance: Float64Array;
	chi2: number;
	dof: number;
	reducedChi2: number;
	iterations: number;
	converged: boolean;
	reason: 'ftol' | 'xtol' | 'max-iterations' | 'stalled' | 'singular';
}

/**
 * In-place Cholesky solve of the SPD system a·x = b (n × n, row-major); a is overwritten by its
 * factor. Returns false when a is not positive definite.
 */
export function choleskySolve(a: Float64Array, b: Float64Array, n: number): boolean {
	for (let j = 0; j < n; j++) {
		let s = a[j * n + j];
		for (let k = 0; k < j; k++) s -= a[j * n + k] * a[j * n + k];
		if (!(s > 0)) return false;
		const ljj = Math.sqrt(s);
		a[j * n + j] = ljj;
		for (let i = j + 1; i < n; i++) {
			let t = a[i * n + j];
			for (let k = 0; k < j; k++) t -= a[i * n + k] * a[j * n + k];
			a[i * n + j] = t / ljj;
		}
	}
	for (let i = 0; i < n; i++) {
		let t = b[i];
		for (let k = 0; k < i; k++) t -= a[i * n + k] * b[k];
		b[i] = t / a[i * n + i];
	}
	for (let i = n - 1; i >= 0; i--) {
		let t = b[i];
		for (let k = i + 1; k < n; k++) t -= a[k * n + i] * b[k];
		b[i] = t / a[i * n + i];
	}
	return true;
}

/** Inverse of an SPD matrix via Cholesky; null when not positive definite. */
export function spdInverse(m: Float64Array, n: number): Float64Array | null {
	// Equilibrate first: parameters differ by many orders of magnitude (areas vs. widths).
	const s = new Float64Array(n);
	for (let i = 0; i < n; i++) s[i] = m[i * n + i] > 0 ? 1 / Math.sqrt(m[i * n + i]) : 0;
	const a = new Float64Array(n * n);
	for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] = m[i * n + j] * s[i] * s[j];
	const inv = new Float64Array(n * n);
	const col = new Float64Array(n);
	const work = new Float64Array(n * n);
	for (let c = 0; c < n; c++) {
		work.set(a);
		col.fill(0);
		col[c] = 1;
		if (!choleskySolve(work, col, n)) return null;
		for (let r = 0; r < n; r++) inv[r * n + c] = col[r] * s[r] * s[c];
	}
	return inv;
}

/** χ² = Σ wᵢ (yᵢ − fᵢ)². */
function weightedSsr(y: Float64Array, f: Float64Array, w: Float64Array, n: number): number {
	let s = 0;
	for (let i = 0; i < n; i++) {
		const r = y[i] - f[i];
		s += w[i] * r * r;
	}
	return s;
}

/**
 * JᵀWJ and JᵀW(y − f) as dot products of Jacobian COLUMNS: each sum keeps its accumulator in a
 * register, several times faster in V8 than updating the matrix point by point.
 */
function accumulateNormal(
	jac: Float64Array,
	f: Float64Array,
	y: Float64Array,
	w: Float64Array,
	n: number,
	np: number,
	jtj: Float64Array,
	g: Float64Array,
	wcol: Float64Array
): void {
	for (let j = 0; j < np; j++) {
		const cj = j * n;
		let gj = 0;
		for (let i = 0; i < n; i++) {
			const v = w[i] * jac[cj + i];
			wcol[i] = v;
			gj += v * (y[i] - f[i]);
		}
		g[j] = gj;
		for (let k = j; k < np; k++) {
			const ck = k * n;
			let s = 0;
			for (let i = 0; i < n; i++) s += wcol[i] * jac[ck + i];
			jtj[j * np + k] = s;
			jtj[k * np + j] = s;
		}
	}
}

export function levenbergMarquardt(
	model: LeastSquaresModel,
	y: ArrayLike<number>,
	weights: ArrayLike<number>,
	start: ArrayLike<number>,
	opts: LMOptions = {}
): LMResult {
	const n = model.nPoints;
	const np = model.nParams;
	const maxIt = opts.maxIterations ?? 200;
	const ftol = opts.ftol ?? 1e-10;
	const xtol = opts.xtol ?? 1e-10;
	const chi2Abs = opts.chi2Abs ?? 0;
	const lower = opts.lower;
	const upper = opts.upper;
	const free = opts.free;

	// Typed copies keep the hot loops monomorphic.
	const yv = y instanceof Float64Array ? y : Float64Array.from(y);
	const wv = weights instanceof Float64Array ? weights : Float64Array.from(weights);
	const p = Float64Array.from(start);
	const pt = new Float64Array(np);
	let f = new Float64Array(n);
	let ft = new Float64Array(n);
	const jac = new Float64Array(n * np);
	const wcol = new Float64Array(n);
	const jtj = new Float64Array(np * np);
	const g = new Float64Array(np);
	const a = new Float64Array(np * np);
	const delta = new Float64Array(np);

	const clamp = (q: Float64Array) => {
		if (lower) for (let j = 0; j < np; j++) if (q[j] < lower[j]) q[j] = lower[j];
		if (upper) for (let j = 0; j < np; j++) if (q[j] > upper[j]) q[j] = upper[j];
	};
	const chi2Of = (fv: Float64Array) => weightedSsr(yv, fv, wv, n);
	const normalEquations = () => {
		accumulateNormal(jac, f, yv, wv, n, np, jtj, g, wcol);
		if (free) {
			for (let j = 0; j < np; j++) {
				if (free[j]) continue;
				for (let k = 0; k < np; k++) jtj[j * np + k] = jtj[k * np + j] = 0;
				jtj[j * np + j] = 1;
				g[j] = 0;
			}
		}
	};

	clamp(p);
	model.evaluate(p, f, jac);
	let chi2 = chi2Of(f);
	let lambda = opts.lambda ?? 1e-3;
	let iterations = 0;
	let reason: LMResult['reason'] = 'max-iterations';
	let converged = false;

	outer: while (iterations < maxIt) {
		iterations++;
		normalEquations();
		for (;;) {
			a.set(jtj);
			for (let j = 0; j < np; j++) {
				const djj = jtj[j * np + j];
				a[j * np + j] = djj + lambda * (djj > 0 ? djj : 1e-30);
			}
			delta.set(g);
			if (!choleskySolve(a, delta, np)) {
				lambda *= 10;
				if (lambda > 1e20) {
					reason = 'singular';
					break outer;
				}
				continue;
			}
			for (let j = 0; j < np; j++) pt[j] = p[j] + delta[j];
			clamp(pt);
			model.evaluate(pt, ft, null);
			const chi2t = chi2Of(ft);
			if (chi2t <= chi2 && Number.isFinite(chi2t)) {
				let stepRel = 0;
				for (let j = 0; j < np; j++) {
					const s = Math.abs(pt[j] - p[j]) / (Math.abs(p[j]) + 1e-300);
					if (s > stepRel) stepRel = s;
				}
				const drop = chi2 - chi2t;
				const fall = chi2 > 0 ? drop / chi2 : 0;
				p.set(pt);
				const tmp = f;
				f = ft;
				ft = tmp;
				chi2 = chi2t;
				lambda = Math.max(lambda / 10, 1e-15);
				model.evaluate(p, f, jac);
				if ((fall < ftol || drop < chi2Abs) && iterations > 1) {
					reason = 'ftol';
					converged = true;
					break outer;
				}
				if (stepRel < xtol) {
					reason = 'xtol';
					converged = true;
					break outer;
				}
				break;
			}
			lambda *= 10;
			if (lambda > 1e16) {
				// No downhill step exists at machine precision: we are at the minimum.
				reason = 'stalled';
				converged = true;
				break outer;
			}
		}
	}

	normalEquations();
	const dof =
		n - (free ? Array.from({ length: np }, (_, j) => free[j]).filter(Boolean).length : np);
	const reducedChi2 = dof > 0 ? chi2 / dof : NaN;
	const inv = spdInverse(jtj, np);
	const covariance = inv ?? new Float64Array(np * np).fill(NaN);
	if (free) {
		for (let j = 0; j < np; j++) {
			if (free[j]) continue;
			for (let k = 0; k < np; k++) covariance[j * np + k] = covariance[k * np + j] = 0;
		}
	}
	if (opts.scaleCovariance && dof > 0)
		for (let j = 0; j < np * np; j++) covariance[j] *= reducedChi2;
	if (!inv) reason = 'singular';
	return {
		params: p,
		covariance,
		chi2,
		dof,
		reducedChi2,
		iterations,
		converged: converged && inv !== null,
		reason
	};
}
