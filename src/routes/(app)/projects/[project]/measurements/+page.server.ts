import { requireProject } from '$lib/server/access';
import type { PageServerLoad } from './$types';
import { filterOptions, measurementTable, parseTableQuery } from './table.server';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	event.depends('app:measurements');
	const query = parseTableQuery(event.url.searchParams);
	const [table, options] = await Promise.all([
		measurementTable(project.id, query),
		filterOptions(project.id)
	]);
	return { query, table, options };
};
