import { requireProject } from '$lib/server/access';
import { listSeries } from '$lib/server/series';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	return { series: await listSeries(project.id) };
};
