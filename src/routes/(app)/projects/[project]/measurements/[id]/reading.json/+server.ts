import { error, json } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { provenanceOf } from '$lib/server/measurements/provenance';
import { readingJson } from '$lib/server/measurements/views';
import { signOffJson } from '$lib/server/reviews';
import { measurementWithReading } from '../reading.server';
import type { RequestHandler } from './$types';

/** The reading (newest, or `?reading=<id>`) in the API's JSON shape, as a download. */
export const GET: RequestHandler = async (event) => {
	const { project } = await requireProject(event, 'read');
	const { reading } = await measurementWithReading(
		project.id,
		event.params.id,
		event.url.searchParams.get('reading')
	);
	if (!reading) error(404, 'This measurement has no reading yet.');
	const body = {
		...readingJson(reading, await provenanceOf(reading.analysisId)),
		sign_off: await signOffJson(reading.id, project.signOffRequired)
	};
	return json(body, {
		headers: { 'content-disposition': `attachment; filename="reading-${reading.id}.json"` }
	});
};
