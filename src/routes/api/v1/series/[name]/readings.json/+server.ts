import { requireToken } from '$lib/server/access';
import { seriesDownload, seriesReadings } from '$lib/server/measurements/export';
import { api, problem } from '$lib/server/problem';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const name = event.params.name ?? '';
	const found = await seriesReadings(project.id, name);
	if (!found) throw problem(404, 'This project has no series of that name.');
	return seriesDownload(found, 'json', { project: project.slug, series: name });
});
