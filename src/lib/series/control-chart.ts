/**
 * Individuals and moving-range (I-MR) control chart for a batch series. Limits come from a
 * baseline period: the centre line is the baseline mean, the spread is estimated from the
 * average moving range of consecutive points, MR̄, through σ̂ = MR̄/d₂.
 *
 * d₂ = 1.128 and D₄ = 3.267 are the tabulated control-chart constants for subgroups of two (a
 * moving range spans two points); they are common practice in the control-chart literature
 * (tables of factors for variables charts). D₃ = 0 for n = 2, so the MR chart has no lower limit.
 *
 * The run rules are common-practice rules of the control-chart literature; each returns the
 * indices of the points that break it and a sentence that says what happened.
 */

/** Tabulated constant for subgroups of two: E[range]/σ for two normal values. */
export const D2 = 1.128;
/** Tabulated constant for subgroups of two: upper limit of the moving range is D₄·MR̄. */
export const D4 = 3.267;
/** The run length on one side of the centre line we flag (the common choice of 8). */
export const RUN_SIDE = 8;
/** The run length of steady increase or decrease we flag. */
export const RUN_TREND = 6;

export interface ControlLimits {
	/** How many leading points the limits were computed from. */
	baseline: number;
	centre: number;
	/** Average moving range of the baseline. */
	mrBar: number;
	/** σ̂ = MR̄/d₂. */
	sigma: number;
	ucl: number;
	lcl: number;
	/** Upper limit of the moving-range chart, D₄·MR̄ (the lower one is 0). */
	mrUcl: number;
	/** Optional specification limits, set by the owner; independent of the control limits. */
	usl?: number;
	lsl?: number;
}

export interface RuleViolation {
	rule:
		| 'beyond-3-sigma'
		| 'run-one-side'
		| 'two-of-three-beyond-2-sigma'
		| 'trend'
		| 'mr-beyond'
		| 'outside-specification';
	/** Indices of the points that break the rule. */
	indices: number[];
	sentence: string;
}

/** |xᵢ − xᵢ₋₁| for i ≥ 1; the first point has no moving range. */
export function movingRanges(values: number[]): number[] {
	const out: number[] = [];
	for (let i = 1; i < values.length; i++) out.push(Math.abs(values[i] - values[i - 1]));
	return out;
}

/** Limits from the first `baseline` points (at least two). */
export function controlLimits(
	values: number[],
	baseline: number = values.length,
	spec: { usl?: number; lsl?: number } = {}
): ControlLimits {
	const n = Math.min(baseline, values.length);
	if (n < 2) throw new Error('Control limits need at least two baseline points.');
	const base = values.slice(0, n);
	const centre = base.reduce((a, b) => a + b, 0) / n;
	const mr = movingRanges(base);
	const mrBar = mr.reduce((a, b) => a + b, 0) / mr.length;
	const sigma = mrBar / D2;
	return {
		baseline: n,
		centre,
		mrBar,
		sigma,
		ucl: centre + 3 * sigma,
		lcl: centre - 3 * sigma,
		mrUcl: D4 * mrBar,
		...(spec.usl != null ? { usl: spec.usl } : {}),
		...(spec.lsl != null ? { lsl: spec.lsl } : {})
	};
}

const list = (indices: number[]) => indices.map((i) => `#${i + 1}`).join(', ');

/** Rule 1: a point beyond the 3σ limits. */
export function beyondThreeSigma(values: number[], l: ControlLimits): RuleViolation | null {
	const indices = values.flatMap((v, i) => (v > l.ucl || v < l.lcl ? [i] : []));
	if (!indices.length) return null;
	return {
		rule: 'beyond-3-sigma',
		indices,
		sentence: `${indices.length === 1 ? 'Point' : 'Points'} ${list(indices)} outside the 3σ control limits.`
	};
}

/** Rule 2: `run` points in a row on one side of the centre line (a point on it breaks the run). */
export function runOneSide(
	values: number[],
	l: ControlLimits,
	run: number = RUN_SIDE
): RuleViolation | null {
	const hit = new Set<number>();
	let start = 0;
	let side = 0;
	for (let i = 0; i < values.length; i++) {
		const s = Math.sign(values[i] - l.centre);
		if (s === 0 || s !== side) {
			side = s;
			start = i;
		}
		if (s !== 0 && i - start + 1 >= run) for (let j = start; j <= i; j++) hit.add(j);
	}
	if (!hit.size) return null;
	const indices = [...hit].sort((a, b) => a - b);
	return {
		rule: 'run-one-side',
		indices,
		sentence: `${run} or more points in a row on one side of the centre line: ${list(indices)}.`
	};
}

/** Rule 3: two of three consecutive points beyond 2σ on the same side. */
export function twoOfThreeBeyondTwoSigma(values: number[], l: ControlLimits): RuleViolation | null {
	const hit = new Set<number>();
	const hi = l.centre + 2 * l.sigma;
	const lo = l.centre - 2 * l.sigma;
	for (let i = 0; i + 2 < values.length; i++) {
		const w = [i, i + 1, i + 2];
		for (const beyond of [(v: number) => v > hi, (v: number) => v < lo]) {
			const out = w.filter((j) => beyond(values[j]));
			if (out.length >= 2) out.forEach((j) => hit.add(j));
		}
	}
	if (!hit.size) return null;
	const indices = [...hit].sort((a, b) => a - b);
	return {
		rule: 'two-of-three-beyond-2-sigma',
		indices,
		sentence: `Two of three points in a row beyond 2σ on the same side: ${list(indices)}.`
	};
}

/** Rule 4: `run` points in a row steadily increasing or steadily decreasing. */
export function trend(values: number[], run: number = RUN_TREND): RuleViolation | null {
	const hit = new Set<number>();
	let start = 0;
	let dir = 0;
	for (let i = 1; i < values.length; i++) {
		const d = Math.sign(values[i] - values[i - 1]);
		if (d === 0) {
			dir = 0;
			start = i;
			continue;
		}
		if (d !== dir) {
			dir = d;
			start = i - 1;
		}
		if (i - start + 1 >= run) for (let j = start; j <= i; j++) hit.add(j);
	}
	if (!hit.size) return null;
	const indices = [...hit].sort((a, b) => a - b);
	return {
		rule: 'trend',
		indices,
		sentence: `${run} or more points in a row steadily increasing or decreasing: ${list(indices)}.`
	};
}

/** Moving ranges above D₄·MR̄; the index is that of the later point of the pair. */
export function movingRangeBeyond(values: number[], l: ControlLimits): RuleViolation | null {
	const indices = movingRanges(values).flatMap((r, i) => (r > l.mrUcl ? [i + 1] : []));
	if (!indices.length) return null;
	return {
		rule: 'mr-beyond',
		indices,
		sentence: `Jump from the previous point above the moving-range limit at ${list(indices)}.`
	};
}

/** Points outside the owner's specification limits (a requirement, not a statistical limit). */
export function outsideSpecification(values: number[], l: ControlLimits): RuleViolation | null {
	if (l.usl == null && l.lsl == null) return null;
	const indices = values.flatMap((v, i) =>
		(l.usl != null && v > l.usl) || (l.lsl != null && v < l.lsl) ? [i] : []
	);
	if (!indices.length) return null;
	return {
		rule: 'outside-specification',
		indices,
		sentence: `${indices.length === 1 ? 'Point' : 'Points'} ${list(indices)} outside the specification limits.`
	};
}

export interface ControlChart {
	limits: ControlLimits;
	movingRanges: number[];
	violations: RuleViolation[];
}

/** The whole chart: limits from the first `baseline` points, every rule over all points. */
export function controlChart(
	values: number[],
	opts: { baseline?: number; usl?: number; lsl?: number } = {}
): ControlChart {
	const limits = controlLimits(values, opts.baseline ?? values.length, opts);
	const violations = [
		beyondThreeSigma(values, limits),
		runOneSide(values, limits),
		twoOfThreeBeyondTwoSigma(values, limits),
		trend(values),
		movingRangeBeyond(values, limits),
		outsideSpecification(values, limits)
	].filter((v): v is RuleViolation => v != null);
	return { limits, movingRanges: movingRanges(values), violations };
}

/** The violations that involve point `index`: what a new reading there brings up. */
export function violationsAt(chart: ControlChart, index: number): RuleViolation[] {
	return chart.violations.filter((v) => v.indices.includes(index));
}
