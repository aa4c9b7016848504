import { ssoConfigured } from '$lib/server/auth';
import { env } from '$lib/server/env';
import { reviewQueueCount, reviewedProjects } from '$lib/server/reviews';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => ({
	user: locals.user ? { email: locals.user.email, name: locals.user.name } : null,
	sso: ssoConfigured() ? { name: env().OIDC_NAME } : null,
	mailbox: Boolean(env().MAIL_CATCHER_URL),
	// Only people who sign off somewhere see the review queue in the navigation.
	review:
		locals.user && (await reviewedProjects(locals.user.id)).length
			? { count: await reviewQueueCount(locals.user.id) }
			: null
});
