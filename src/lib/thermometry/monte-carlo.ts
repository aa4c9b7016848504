/**
 * Propagation of distributions by the Monte Carlo method, JCGM 101:2008 (GUM Supplement 1):
 * draw every input from its PDF, evaluate the model, and summarise the output distribution by
 * its mean, standard deviation, the SHORTEST 95 % coverage interval (§7.7) and a histogram.
 * Seeded (mulberry32 + Box–Muller, see random.ts), so a reading's Monte Carlo result repeats.
 */
import { createRng, type Rng } from './random';
import type { MonteCarloResult } from './types';

export type Distribution =
	| { kind: 'normal'; mean: number; sd: number }
	| { kind: 'rectangular'; mean: number; halfWidth: number }
	| { kind: 'poisson'; mean: number }
	| { kind: 'fixed'; value: number };

export function draw(d: Distribution, rng: Rng): number {
	switch (d.kind) {
		case 'normal':
			return d.sd > 0 ? d.mean + d.sd * rng.normal() : d.mean;
		case 'rectangular':
			return d.mean + d.halfWidth * (2 * rng.uniform() - 1);
		case 'poisson':
			return rng.poisson(d.mean);
		case 'fixed':
			return d.value;
	}
}

/** Mean, sd, shortest 95 % interval and histogram of finite samples (sorted in place). */
export function summarise(
	samples: Float64Array,
	trials: number,
	seed: number,
	bins = 40
): MonteCarloResult {
	const ok = samples.filter((v) => Number.isFinite(v)).sort();
	const m = ok.length;
	let mean = 0;
	for (let i = 0; i < m; i++) mean += ok[i];
	mean /= m || 1;
	let ss = 0;
	for (let i = 0; i < m; i++) ss += (ok[i] - mean) ** 2;
	const sd = m > 1 ? Math.sqrt(ss / (m - 1)) : NaN;
	// Shortest interval holding 95 % of the samples (JCGM 101 §7.7.2).
	const q = Math.max(1, Math.round(0.95 * m));
	let best = 0;
	for (let i = 1; i + q - 1 < m; i++)
		if (ok[i + q - 1] - ok[i] < ok[best + q - 1] - ok[best]) best = i;
	const lo = m ? ok[Math.floor(0.001 * (m - 1))] : NaN;
	const hi = m ? ok[Math.ceil(0.999 * (m - 1))] : NaN;
	const edges: number[] = [];
	const counts = new Array<number>(bins).fill(0);
	const width = (hi - lo) / bins || 1;
	for (let b = 0; b <= bins; b++) edges.push(lo + b * width);
	for (let i = 0; i < m; i++) {
		const b = Math.floor((ok[i] - lo) / width);
		if (b >= 0 && b < bins) counts[b]++;
		else if (ok[i] === hi) counts[bins - 1]++;
	}
	return {
		trials,
		seed,
		mean_k: mean,
		sd_k: sd,
		interval_95_k: m ? [ok[best], ok[best + q - 1]] : [NaN, NaN],
		histogram: { edges, counts },
		invalid_trials: trials - m
	};
}

/** Propagate input distributions through `model` (which receives one draw per input). */
export function propagate(
	inputs: Distribution[],
	model: (x: Float64Array) => number,
	trials: number,
	seed = 1
): MonteCarloResult {
	const rng = createRng(seed);
	const x = new Float64Array(inputs.length);
	const out = new Float64Array(trials);
	for (let t = 0; t < trials; t++) {
		for (let i = 0; i < inputs.length; i++) x[i] = draw(inputs[i], rng);
		out[t] = model(x);
	}
	return summarise(out, trials, seed);
}
