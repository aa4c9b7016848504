import { requireProject } from '$lib/server/access';
import { readingsCsv } from '$lib/server/measurements/export';
import { parseTableQuery } from '../table.server';
import type { RequestHandler } from './$types';

/** The project's readings (newest per measurement) as CSV, with the table's status/series/batch/flag filters. */
export const GET: RequestHandler = async (event) => {
	const { project } = await requireProject(event, 'read');
	const q = parseTableQuery(event.url.searchParams);
	const csv = await readingsCsv(project.id, {
		status: q.status,
		series: q.series,
		batch: q.batch,
		flag: q.flag
	});
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${project.slug}-readings.csv"`
		}
	});
};
