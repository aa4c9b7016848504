import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { provenanceOf } from '$lib/server/measurements/provenance';
import { loadMeasurement, readingJson } from '$lib/server/measurements/views';
import { api, problem } from '$lib/server/problem';
import { signOffJson } from '$lib/server/reviews';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const found = await loadMeasurement(project.id, event.params.id ?? '');
	if (!found) throw problem(404, 'This project has no measurement with that id.');
	if (!found.reading) {
		const status = found.measurement.status;
		if (status === 'failed') {
			throw problem(
				409,
				`The analysis failed, so there is no reading: ${found.analysis?.failure?.message ?? 'no reason kept'}`,
				{
					failure: found.analysis?.failure
				}
			);
		}
		throw problem(404, `No reading yet: the measurement is ${status}. Poll again in a moment.`, {
			status_of_measurement: status
		});
	}
	return json({
		...readingJson(found.reading, await provenanceOf(found.reading.analysisId)),
		sign_off: await signOffJson(found.reading.id, project.signOffRequired)
	});
});
