import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { eq } from 'drizzle-orm';
import { authHandle } from '$lib/server/auth';
import { closeDb, db } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { env } from '$lib/server/env';
import { problem, problemResponse } from '$lib/server/problem';
import { stopQueue } from '$lib/server/queue';
import { startWorker } from '$lib/server/worker';

export const init: ServerInit = async () => {
	// Fail at start, with a list of what is missing, rather than on the first request.
	env();
	// The app analyses in-process too, unless a deployment runs only separate workers.
	const worker = process.env.WORKER_IN_PROCESS !== 'false' ? await startWorker() : null;
	// adapter-node emits this after it stops taking requests; let the current job finish, then
	// close the queue and the pool so the process can exit.
	process.once('sveltekit:shutdown', async () => {
		await worker?.stop();
		await stopQueue();
		await closeDb();
	});
};

const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain'];

/**
 * Cross-site form posts are refused everywhere but the token-authenticated API: the same rule
 * as SvelteKit's own check, which is switched off in svelte.config.js for the API's sake.
 */
const sameOriginForms: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	const type = request.headers.get('content-type')?.split(';')[0].trim().toLowerCase() ?? '';
	if (
		!['GET', 'HEAD', 'OPTIONS'].includes(request.method) &&
		FORM_TYPES.includes(type) &&
		!url.pathname.startsWith('/api/') &&
		request.headers.get('origin') !== url.origin
	) {
		return new Response('Cross-site form submissions are refused.', { status: 403 });
	}
	return resolve(event);
};

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

/** SvelteKit refuses a method a route does not export in plain text; the API answers in RFC 9457. */
const apiMethods: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (response.status !== 405 || !event.url.pathname.startsWith('/api/')) return response;
	const allow = response.headers.get('allow') ?? 'GET';
	const refused = problemResponse(
		problem(405, `${event.request.method} is not offered here; this endpoint answers ${allow}.`),
		event.url.pathname
	);
	refused.headers.set('allow', allow);
	return refused;
};

export const handle = sequence(
	sameOriginForms,
	authHandle,
	currentUser,
	securityHeaders,
	apiMethods
);

export const handleError: HandleServerError = ({ error, status }) => {
	if (status !== 404) console.error(error);
	return { message: status === 404 ? 'Not found' : 'Something went wrong on the server.' };
};
