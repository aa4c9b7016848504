import { json } from '@sveltejs/kit';
import { openApiDocument } from '$lib/server/openapi';
import type { RequestHandler } from './$types';

// Public, like any API description: it holds no project data.
export const GET: RequestHandler = ({ url }) =>
	json(openApiDocument(url.origin), {
		headers: { 'cache-control': 'public, max-age=300', 'access-control-allow-origin': '*' }
	});
