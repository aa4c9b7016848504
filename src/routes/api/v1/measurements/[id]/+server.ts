import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { loadMeasurement, measurementJson } from '$lib/server/measurements/views';
import { api, problem } from '$lib/server/problem';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const found = await loadMeasurement(project.id, event.params.id ?? '');
	if (!found) throw problem(404, 'This project has no measurement with that id.');
	return json(
		measurementJson(found.measurement, {
			files: found.files,
			reading: found.reading,
			failure: found.analysis?.failure ?? null,
			origin: event.url.origin
		})
	);
});
