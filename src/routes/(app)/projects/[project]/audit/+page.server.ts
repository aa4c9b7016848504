import { requireProject } from '$lib/server/access';
import { auditTrail, type AuditFilter } from '$lib/server/audit-trail';
import type { PageServerLoad } from './$types';

// Read only: the trail has no actions, and the database refuses UPDATE and DELETE on it.
export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'sign-off');
	const q = event.url.searchParams;
	const text = (key: string) => q.get(key)?.trim().slice(0, 200) || undefined;
	const filter: AuditFilter = {
		action: text('action'),
		who: text('who'),
		objectType: text('object'),
		from: text('from'),
		to: text('to')
	};
	const page = Math.max(1, Math.floor(Number(q.get('page')) || 1));
	return { filter, page, ...(await auditTrail(project.id, filter, page)) };
};
