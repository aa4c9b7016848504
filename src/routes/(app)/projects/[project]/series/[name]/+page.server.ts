import { error } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { fieldFailure } from '$lib/server/forms';
import { loadSeriesPoints, type SeriesPoint } from '$lib/server/series';
import { chartOptions, isSubscribed, setSubscribed } from '$lib/server/series-alerts';
import { loadMapColumns } from '$lib/server/series-map';
import {
	addMeasurementsForm,
	addToSeries,
	findSeries,
	measurementsOutside,
	type Series
} from '$lib/server/series-store';
import { controlChart } from '$lib/series/control-chart';
import { powerSweep } from '$lib/thermometry/power-sweep';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

const usable = (p: SeriesPoint) => p.t != null && p.u != null && p.u > 0;

function sweepOf(points: SeriesPoint[]) {
	const used = points.filter((p) => usable(p) && p.powerMw != null);
	if (used.length < 2) return { used, fit: null };
	const fit = powerSweep(
		used.map((p) => ({ power_mw: p.powerMw!, temperature_k: p.t!, u_temperature_k: p.u! }))
	);
	return { used, fit };
}

function chartOf(s: Series, points: SeriesPoint[]) {
	const used = points.filter(usable);
	if (used.length < 2) return { used, chart: null };
	return {
		used,
		chart: controlChart(
			used.map((p) => p.t!),
			chartOptions(s, used.length)
		)
	};
}

async function seriesOf(event: RequestEvent, capability: 'read' | 'upload') {
	const access = await requireProject(event, capability);
	const s = await findSeries(access.project.id, event.params.name);
	if (!s) error(404, 'This project has no series of that name.');
	return { ...access, series: s };
}

export const load: PageServerLoad = async (event) => {
	const { project, user, series: s } = await seriesOf(event, 'read');
	// A map loads only its columns; the other kinds need each point's details.
	const map = s.kind === 'map' ? await loadMapColumns(project.id, s.name) : null;
	const points = map ? [] : await loadSeriesPoints(project.id, s.name);
	const count = map ? map.id.length : points.length;
	const withoutReading = map
		? map.t.filter((t) => t == null).length
		: points.filter((p) => !usable(p)).length;
	return {
		series: s,
		count,
		withoutReading,
		subscribed: await isSubscribed(s.id, user.id),
		candidates: await measurementsOutside(project.id, s.name),
		map,
		sweep: s.kind === 'power-sweep' ? sweepOf(points) : null,
		control: s.kind === 'batch' ? chartOf(s, points) : null,
		trend: s.kind === 'time' ? points.filter(usable) : null
	};
};

export const actions: Actions = {
	add: async (event) => {
		const { project, user, series: s } = await seriesOf(event, 'upload');
		const form = await event.request.formData();
		const parsed = addMeasurementsForm.safeParse({ ids: form.getAll('ids') });
		if (!parsed.success) return fieldFailure(400, 'ids', parsed.error.issues[0].message);
		const added = await addToSeries(project.id, s, parsed.data.ids, { userId: user.id });
		return { added };
	},
	subscribe: async (event) => {
		const { user, series: s } = await seriesOf(event, 'read');
		await setSubscribed(s.id, user.id, true);
		return { subscribed: true };
	},
	unsubscribe: async (event) => {
		const { user, series: s } = await seriesOf(event, 'read');
		await setSubscribed(s.id, user.id, false);
		return { subscribed: false };
	}
};
