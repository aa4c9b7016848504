import { error } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { seriesDownload, seriesReadings } from '$lib/server/measurements/export';
import type { RequestHandler } from './$types';

/** The series' readings (newest per measurement) as CSV, the same rows as the API's export. */
export const GET: RequestHandler = async (event) => {
	const { project } = await requireProject(event, 'read');
	const found = await seriesReadings(project.id, event.params.name);
	if (!found) error(404, 'This project has no series of that name.');
	return seriesDownload(found, 'csv', { project: project.slug, series: event.params.name });
};
