import { isHttpError, type RequestEvent, type RequestHandler } from '@sveltejs/kit';
import { z } from 'zod';

/**
 * RFC 9457 problem details for every API error. API routes wrap their handlers in `api()`, so a
 * thrown `problem`, a SvelteKit `error()`, a zod failure or an unexpected fault all leave as
 * `application/problem+json` with a sentence that says what to change.
 */
export class Problem extends Error {
	constructor(
		readonly status: number,
		readonly title: string,
		readonly detail: string,
		readonly extra: Record<string, unknown> = {},
		readonly headers: Record<string, string> = {}
	) {
		super(detail);
	}
}

const TITLES: Record<number, string> = {
	400: 'Bad request',
	401: 'Not authenticated',
	403: 'Not allowed',
	404: 'Not found',
	405: 'Method not allowed',
	409: 'Conflict',
	413: 'Payload too large',
	415: 'Unsupported media type',
	422: 'Unprocessable content',
	429: 'Too many requests',
	500: 'Internal error',
	503: 'Service unavailable'
};

export function problem(status: number, detail: string, extra: Record<string, unknown> = {}) {
	return new Problem(status, TITLES[status] ?? 'Error', detail, extra);
}

export function problemResponse(p: Problem, instance?: string): Response {
	const body = {
		type: 'about:blank',
		title: p.title,
		status: p.status,
		detail: p.detail,
		instance,
		...p.extra
	};
	return new Response(JSON.stringify(body), {
		status: p.status,
		headers: { 'content-type': 'application/problem+json', ...p.headers }
	});
}

function toProblem(err: unknown): Problem {
	if (err instanceof Problem) return err;
	if (isHttpError(err)) return problem(err.status, err.body.message);
	if (err instanceof z.ZodError) {
		const errors = err.issues.map((i) => ({ pointer: '/' + i.path.join('/'), detail: i.message }));
		return problem(422, errors.map((e) => `${e.pointer}: ${e.detail}`).join('; '), { errors });
	}
	console.error(err);
	return problem(500, 'The server failed while handling this request; it has been logged.');
}

export function api(handler: RequestHandler): RequestHandler {
	return async (event: RequestEvent) => {
		try {
			return await handler(event);
		} catch (err) {
			return problemResponse(toProblem(err), event.url.pathname);
		}
	};
}
