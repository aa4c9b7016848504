import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { api, problem } from '$lib/server/problem';
import { loadSeriesPoints } from '$lib/server/series';
import { pointsJson, seriesJson } from '$lib/server/series-json';
import { findSeries } from '$lib/server/series-store';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const s = await findSeries(project.id, event.params.name ?? '');
	if (!s) throw problem(404, 'This project has no series of that name.');
	const points = await loadSeriesPoints(project.id, s.name);
	return json({
		...seriesJson(s, points.length, event.url.origin, project.slug),
		points: pointsJson(points)
	});
});
