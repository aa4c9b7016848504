/**
 * Second pass of cosmic-ray removal, against the fitted band.
 *
 * The first pass (prepare.ts `findSpikes`) judges a spike by its shape alone, so on top of a
 * strong band it must be cautious: a spike of a few thousand counts on a band of 50,000 is a
 * small step there, and inside the band zone a 2–3-point run may be a whole undersampled band.
 * Once the band has been fitted, its model is a far better reference: a point that sits many
 * standard deviations above the fitted band while its neighbours agree with the fit is a cosmic
 * ray, not Raman signal. Those points are masked and the pair refitted (analyze.ts). The test is
 * one-sided and strict (6σ, quiet neighbours, a locally good fit) so that a misfit band shape
 * cannot be "repaired" by deleting data.
 */
import { profile, shapeCode } from './lineshapes';
import type { FittedBand, Lineshape, PreparedWindow } from './types';

export interface ResidualSpikeOptions {
	/** How far, in standard deviations, a run's residuals must jump above its neighbours' (6). */
	sigma?: number;
}

/**
 * Runs of 1–3 points whose standardised residuals from the fitted band jump far above those of
 * the points beside them; returns the indices to mask. The test is on the residual's step, not
 * its size: a band shape the model misses leaves residuals that are smooth over the band width
 * (many points of one sign), while a cosmic ray leaves a step of one to three points. The fit
 * itself bends towards a big spike, so its neighbours' residuals may be far from zero; the step
 * is still there. Bands narrower than three pixels per FWHM are left alone: there the model's
 * own misfit can be a one-pixel step.
 */
export function findResidualSpikes(
	w: PreparedWindow,
	band: FittedBand,
	lineshape: Lineshape,
	opts: ResidualSpikeOptions = {}
): number[] {
	const sigma = opts.sigma ?? 6;
	const code = shapeCode(lineshape);
	const eta = band.eta ?? 0.5;
	const c = band.center_cm1;
	const fwhm = band.fwhm_cm1;
	if (!(fwhm > 0)) return [];
	const peak = profile(code, c, c, fwhm, eta, null);
	if (!(peak > 0)) return [];
	const half = Math.min(Math.max(5 * fwhm, 10), 200);
	const idx: number[] = [];
	const z: number[] = [];
	for (let i = 0; i < w.shift.length; i++) {
		const x = w.shift[i];
		if (x < c - half || x > c + half || !w.usable[i]) continue;
		// The fitted model per pixel, from the band's peak height (no pixel-width convention needed).
		const model =
			(band.height * profile(code, x, c, fwhm, eta, null)) / peak +
			band.baseline.a +
			band.baseline.b * (x - c);
		idx.push(i);
		z.push((w.rate[i] - model) / Math.sqrt(w.variance[i]));
	}
	const n = z.length;
	if (n < 10) return [];
	const pixel = Math.abs(w.shift[idx[n - 1]] - w.shift[idx[0]]) / (idx[n - 1] - idx[0]);
	if (fwhm < 3 * pixel) return [];
	// The single strongest step wins; the caller refits and asks again.
	let best = -1;
	let bestEnd = -1;
	let bestStep = sigma;
	for (let k = 1; k < n - 1; k++) {
		for (let len = 1; len <= 3 && k + len < n; len++) {
			const end = k + len - 1;
			// Only consecutive pixels form one run.
			if (idx[end] - idx[k] !== len - 1) break;
			if (idx[k] - idx[k - 1] !== 1 || idx[end + 1] - idx[end] !== 1) continue;
			let runMin = Infinity;
			for (let j = k; j <= end; j++) runMin = Math.min(runMin, z[j]);
			const step = runMin - Math.max(z[k - 1], z[end + 1]);
			if (step > bestStep) {
				bestStep = step;
				best = k;
				bestEnd = end;
			}
		}
	}
	if (best < 0) return [];
	const out: number[] = [];
	for (let j = best; j <= bestEnd; j++) out.push(idx[j]);
	return out;
}
