import type { Handle, HandleServerError } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { eq } from 'drizzle-orm';
import { authHandle } from '$lib/server/auth';
import { db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { env } from '$lib/server/env';

// Fail at start, with a list of what is missing, rather than on the first request.
env();

/** Re-read the signed-in person on every request, so a removed account loses access at once. */
const currentUser: Handle = async ({ event, resolve }) => {
	const session = await event.locals.auth();
	const id = session?.user?.id;
	event.locals.user = null;
	if (id) {
		const user = await db.query.users.findFirst({
			where: eq(users.id, id),
			columns: { id: true, email: true, name: true, passwordHash: true, notifyOnProblems: true }
		});
		if (user) {
			const { passwordHash, ...rest } = user;
			event.locals.user = { ...rest, hasPassword: passwordHash !== null };
		}
	}
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('x-content-type-options', 'nosniff');
	response.headers.set('referrer-policy', 'same-origin');
	if (!event.url.pathname.startsWith('/api/')) response.headers.set('x-frame-options', 'DENY');
	return response;
};

export const handle = sequence(authHandle, currentUser, securityHeaders);

export const handleError: HandleServerError = ({ error, status }) => {
	if (status !== 404) console.error(error);
	return { message: status === 404 ? 'Not found' : 'Something went wrong on the server.' };
};
