import { json } from '@sveltejs/kit';
import { requireToken } from '$lib/server/access';
import { api } from '$lib/server/problem';

export const GET = api(async (event) => {
	const { token, project } = await requireToken(event);
	return json({
		project: { slug: project.slug, name: project.name },
		token: { name: token.name, prefix: token.prefix, scopes: token.scopes }
	});
});
