import { api, problem } from '$lib/server/problem';

// Anything under /api that no route matches answers in problem+json, like the rest of the API.
const notFound = api(async ({ url }) => {
	throw problem(404, `There is no API endpoint at ${url.pathname}. The API lives under /api/v1.`);
});

export const GET = notFound;
export const POST = notFound;
export const PUT = notFound;
export const PATCH = notFound;
export const DELETE = notFound;
