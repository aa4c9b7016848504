import { count, eq } from 'drizzle-orm';
import { requireProject } from '$lib/server/access';
import { db } from '$lib/server/db';
import { acquisitionTokens, memberships } from '$lib/server/db/schema';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const [[members], [tokens]] = await Promise.all([
		db.select({ n: count() }).from(memberships).where(eq(memberships.projectId, project.id)),
		db
			.select({ n: count() })
			.from(acquisitionTokens)
			.where(eq(acquisitionTokens.projectId, project.id))
	]);
	return { counts: { members: members.n, tokens: tokens.n } };
};
