import { requireProject } from '$lib/server/access';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const { project, role } = await requireProject(event, 'read');
	return {
		project: { slug: project.slug, name: project.name, description: project.description },
		role
	};
};
