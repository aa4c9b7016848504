import { requireToken } from '$lib/server/access';
import { readingsCsv } from '$lib/server/measurements/export';
import { listFilters } from '$lib/server/measurements/views';
import { api } from '$lib/server/problem';

export const GET = api(async (event) => {
	const { project } = await requireToken(event, 'measurements:read');
	const filters = listFilters
		.omit({ cursor: true, limit: true })
		.parse(Object.fromEntries(event.url.searchParams));
	return new Response(await readingsCsv(project.id, filters), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${project.slug}-readings.csv"`
		}
	});
});
