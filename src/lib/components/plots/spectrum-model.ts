/**
 * What the spectrum plot draws besides the data: the fitted band on its local straight baseline,
 * evaluated the way the fitter does (per-pixel rate = area · profile · pixel width + a + b·(x − centre)),
 * and the residuals of the usable points in the fitted region. Pure TS, safe in the browser.
 */
import { band } from '$lib/thermometry/lineshapes';
import { regionHalfWidth } from '$lib/thermometry/band-fit';
import type { FittedBand, Lineshape } from '$lib/thermometry/types';

export interface PlotWindow {
	shift: number[];
	rate: number[];
	usable: number[];
	baseline?: number[];
}

/** Pixel width at each point: half the distance between its neighbours. */
export function pixelWidths(x: number[]): number[] {
	const n = x.length;
	return x.map((xi, i) => {
		const left = i > 0 ? x[i - 1] : 2 * xi - x[i + 1];
		const right = i < n - 1 ? x[i + 1] : 2 * xi - x[i - 1];
		return Math.abs(right - left) / 2;
	});
}

export interface BandCurve {
	x: number[];
	fit: number[];
	localBaseline: number[];
	residualX: number[];
	residual: number[];
}

/** The band model over its fitted region, on the window's own pixels. */
export function bandCurve(w: PlotWindow, b: FittedBand, lineshape: Lineshape): BandCurve {
	const half = regionHalfWidth(b.fwhm_cm1);
	const lo = b.center_cm1 - half;
	const hi = b.center_cm1 + half;
	const dx = pixelWidths(w.shift);
	const out: BandCurve = { x: [], fit: [], localBaseline: [], residualX: [], residual: [] };
	for (let i = 0; i < w.shift.length; i++) {
		const x = w.shift[i];
		if (x < lo || x > hi) continue;
		const base = b.baseline.a + b.baseline.b * (x - b.center_cm1);
		const f = band(lineshape, x, b.area, b.center_cm1, b.fwhm_cm1, b.eta ?? 0.5) * dx[i] + base;
		out.x.push(x);
		out.fit.push(f);
		out.localBaseline.push(base);
		if (w.usable[i]) {
			out.residualX.push(x);
			out.residual.push(w.rate[i] - f);
		}
	}
	return out;
}
