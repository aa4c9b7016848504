import { ssoConfigured } from '$lib/server/auth';
import { env } from '$lib/server/env';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = ({ locals }) => ({
	user: locals.user ? { email: locals.user.email, name: locals.user.name } : null,
	sso: ssoConfigured() ? { name: env().OIDC_NAME } : null,
	mailbox: Boolean(env().MAIL_CATCHER_URL)
});
