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
	/** Optional: column j of the Jacobian is zero outside rows [columnLo[j], columnHi[j]). */
	readonly columnLo?: ArrayLike<number>;
	readonly columnHi?: ArrayLike<number>;
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
	/** Skip the covariance (an intermediate fit whose parameters only start the next one). */
	covariance?: boolean;
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
	// Factor once (L Lᵀ in the lower triangle of a), then two triangular solves per column.
	if (!choleskySolve(a, col, n)) return null;
	for (let c = 0; c < n; c++) {
		col.fill(0);
		col[c] = 1;
		for (let i = 0; i < n; i++) {
			let t = col[i];
			for (let k = 0; k < i; k++) t -= a[i * n + k] * col[k];
			col[i] = t / a[i * n + i];
		}
		for (let i = n - 1; i >= 0; i--) {
			let t = col[i];
			for (let k = i + 1; k < n; k++) t -= a[k * n + i] * col[k];
			col[i] = t / a[i * n + i];
		}
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
 * JᵀWJ and JᵀW(y − f) as dot products of Jacobian COLUMNS: each sum keeps its accumulators in
 * registers (four, to break the add chain), several times faster in V8 than updating the matrix
 * point by point. A column that is zero outside rows [lo, hi) (a baseline of one window in a
 * joint fit) is only summed there.
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
	wcol: Float64Array,
	colLo: ArrayLike<number> | undefined,
	colHi: ArrayLike<number> | undefined
): void {
	for (let j = 0; j < np; j++) {
		const cj = j * n;
		const lj = colLo ? colLo[j] : 0;
		const hj = colHi ? colHi[j] : n;
		let gj = 0;
		for (let i = lj; i < hj; i++) {
			const v = w[i] * jac[cj + i];
			wcol[i] = v;
			gj += v * (y[i] - f[i]);
		}
		g[j] = gj;
		for (let k = j; k < np; k++) {
			const ck = k * n;
			const lo = colLo ? Math.max(lj, colLo[k]) : 0;
			const hi = colHi ? Math.min(hj, colHi[k]) : n;
			let s0 = 0;
			let s1 = 0;
			let s2 = 0;
			let s3 = 0;
			let i = lo;
			for (; i + 3 < hi; i += 4) {
				s0 += wcol[i] * jac[ck + i];
				s1 += wcol[i + 1] * jac[ck + i + 1];
				s2 += wcol[i + 2] * jac[ck + i + 2];
				s3 += wcol[i + 3] * jac[ck + i + 3];
			}
			for (; i < hi; i++) s0 += wcol[i] * jac[ck + i];
			const s = s0 + s1 + s2 + s3;
			jtj[j * np + k] = s;
			jtj[k * np + j] = s;
		}
	}
}

/** Running totals for profiling and the benchmark (fits, iterations, model passes); never read by the engine. */
export const lmCounters = { fits: 0, iterations: 0, evaluations: 0 };

interface Workspace {
	pt: Float64Array;
	f: Float64Array;
	ft: Float64Array;
	jac: Float64Array;
	jt: Float64Array;
	wcol: Float64Array;
	jtj: Float64Array;
	g: Float64Array;
	a: Float64Array;
	delta: Float64Array;
}

/**
 * Work arrays reused between fits of the same size: a map of thousands of pairs would otherwise
 * allocate (and collect) the same buffers thousands of times. Safe because a fit never starts
 * another fit from inside `evaluate`, and results are copied out.
 */
const workspaces = new Map<number, Workspace>();
function workspace(n: number, np: number): Workspace {
	const key = n * 64 + np;
	let w = workspaces.get(key);
	if (!w) {
		if (workspaces.size > 32) workspaces.clear();
		w = {
			pt: new Float64Array(np),
			f: new Float64Array(n),
			ft: new Float64Array(n),
			jac: new Float64Array(n * np),
			jt: new Float64Array(n * np),
			wcol: new Float64Array(n),
			jtj: new Float64Array(np * np),
			g: new Float64Array(np),
			a: new Float64Array(np * np),
			delta: new Float64Array(np)
		};
		workspaces.set(key, w);
	}
	return w;
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
	const ws = workspace(n, np);
	const { pt, wcol, jtj, g, a, delta } = ws;
	let { f, ft, jac, jt } = ws;

	const clamp = (q: Float64Array) => {
		if (lower) for (let j = 0; j < np; j++) if (q[j] < lower[j]) q[j] = lower[j];
		if (upper) for (let j = 0; j < np; j++) if (q[j] > upper[j]) q[j] = upper[j];
	};
	const chi2Of = (fv: Float64Array) => weightedSsr(yv, fv, wv, n);
	const normalEquations = () => {
		accumulateNormal(jac, f, yv, wv, n, np, jtj, g, wcol, model.columnLo, model.columnHi);
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

	// After an accepted step the normal equations at the new point tell, before any trial pass,
	// what the next Gauss–Newton step could still gain: χ² falls by gᵀδ with (JᵀWJ)δ = g. When
	// that is below the tolerances the fit has converged, and these normal equations are also the
	// ones the covariance needs, so the confirming model pass and a second accumulation are saved.
	let accepted = 0;
	let normalAtP = false;
	outer: while (iterations < maxIt) {
		normalEquations();
		normalAtP = true;
		if (accepted > 0) {
			a.set(jtj);
			delta.set(g);
			if (choleskySolve(a, delta, np)) {
				let gain = 0;
				for (let j = 0; j < np; j++) gain += g[j] * delta[j];
				if (gain >= 0 && (gain < chi2Abs || (chi2 > 0 && gain < ftol * chi2))) {
					reason = 'ftol';
					converged = true;
					break outer;
				}
			}
		}
		iterations++;
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
			// The Jacobian is computed at the trial point too: steps are rarely rejected from our
			// starting values, so this saves a second model pass per accepted step.
			model.evaluate(pt, ft, jt);
			lmCounters.evaluations++;
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
				const tf = f;
				f = ft;
				ft = tf;
				const tj = jac;
				jac = jt;
				jt = tj;
				chi2 = chi2t;
				normalAtP = false;
				accepted++;
				lambda = Math.max(lambda / 10, 1e-15);
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

	lmCounters.fits++;
	lmCounters.iterations += iterations;
	const dof =
		n - (free ? Array.from({ length: np }, (_, j) => free[j]).filter(Boolean).length : np);
	const reducedChi2 = dof > 0 ? chi2 / dof : NaN;
	let inv: Float64Array | null = null;
	if (opts.covariance !== false) {
		if (!normalAtP) normalEquations();
		inv = spdInverse(jtj, np);
	}
	const covariance = inv ?? new Float64Array(np * np).fill(NaN);
	if (free) {
		for (let j = 0; j < np; j++) {
			if (free[j]) continue;
			for (let k = 0; k < np; k++) covariance[j * np + k] = covariance[k * np + j] = 0;
		}
	}
	if (opts.scaleCovariance && dof > 0)
		for (let j = 0; j < np * np; j++) covariance[j] *= reducedChi2;
	if (!inv && opts.covariance !== false) reason = 'singular';
	return {
		params: p,
		covariance,
		chi2,
		dof,
		reducedChi2,
		iterations,
		converged: converged && (inv !== null || opts.covariance === false),
		reason
	};
}
