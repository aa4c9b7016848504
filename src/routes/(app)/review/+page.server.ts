import { requireUser } from '$lib/server/access';
import { queueFilters, reviewQueue, reviewQueueCount, reviewedProjects } from '$lib/server/reviews';
import type { PageServerLoad } from './$types';

/** The oldest this many are listed; the count says how many more wait. */
const SHOWN = 200;

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const raw = Object.fromEntries(
		[...event.url.searchParams].filter(([, v]) => v.trim() !== '').map(([k, v]) => [k, v.trim()])
	);
	const parsed = queueFilters.safeParse(raw);
	// A hand-edited address with a bad filter shows the whole queue rather than an error page.
	const filters = parsed.success ? parsed.data : {};
	const [projects, items, total] = await Promise.all([
		reviewedProjects(user.id),
		reviewQueue(user.id, filters, SHOWN),
		reviewQueueCount(user.id, filters)
	]);
	return { projects, items, total, filters, badFilter: !parsed.success };
};
