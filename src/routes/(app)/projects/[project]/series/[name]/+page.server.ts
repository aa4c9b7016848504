import { error } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { loadSeriesPoints, viewFor, type SeriesPoint } from '$lib/server/series';
import { controlChart } from '$lib/series/control-chart';
import { powerSweep } from '$lib/thermometry/power-sweep';
import type { PageServerLoad } from './$types';

/** Limits come from the first BASELINE points (or all, when there are fewer). */
const BASELINE = 20;

const usable = (p: SeriesPoint) => p.t != null && p.u != null && p.u > 0;

/** The map as flat arrays over the grid of distinct x and y: one payload, not one per cell. */
function mapOf(points: SeriesPoint[]) {
	const placed = points.filter((p) => p.x != null && p.y != null);
	const xs = [...new Set(placed.map((p) => p.x!))].sort((a, b) => a - b);
	const ys = [...new Set(placed.map((p) => p.y!))].sort((a, b) => a - b);
	const ix = new Map(xs.map((x, i) => [x, i]));
	const iy = new Map(ys.map((y, i) => [y, i]));
	const cells = xs.length * ys.length;
	const t: (number | null)[] = Array(cells).fill(null);
	const u: (number | null)[] = Array(cells).fill(null);
	const ids: (string | null)[] = Array(cells).fill(null);
	for (const p of placed) {
		const c = iy.get(p.y!)! * xs.length + ix.get(p.x!)!;
		ids[c] = p.id;
		if (usable(p)) {
			t[c] = p.t;
			u[c] = p.u;
		}
	}
	const hottest = placed
		.filter(usable)
		.reduce<SeriesPoint | null>((best, p) => (best == null || p.t! > best.t! ? p : best), null);
	return { xs, ys, t, u, ids, hottest };
}

function sweepOf(points: SeriesPoint[]) {
	const used = points.filter((p) => usable(p) && p.powerMw != null);
	if (used.length < 2) return { used, fit: null };
	const fit = powerSweep(
		used.map((p) => ({ power_mw: p.powerMw!, temperature_k: p.t!, u_temperature_k: p.u! }))
	);
	return { used, fit };
}

function chartOf(points: SeriesPoint[]) {
	const used = points.filter(usable);
	if (used.length < 2) return { used, chart: null };
	return {
		used,
		chart: controlChart(
			used.map((p) => p.t!),
			{ baseline: Math.min(BASELINE, used.length) }
		)
	};
}

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const name = event.params.name;
	const points = await loadSeriesPoints(project.id, name);
	if (!points.length) error(404, 'No measurements carry this series label.');
	const view = viewFor(points);
	const withoutReading = points.filter((p) => !usable(p)).length;
	return {
		name,
		view,
		count: points.length,
		withoutReading,
		map: view === 'map' ? mapOf(points) : null,
		sweep: view === 'power-sweep' ? sweepOf(points) : null,
		control: view === 'control-chart' ? { ...chartOf(points), baselineMax: BASELINE } : null
	};
};
