import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { TOKEN_SCOPES } from '$lib/roles';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import { createToken, revokeToken, tokensOf } from '$lib/server/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'manage');
	return { tokens: await tokensOf(project.id) };
};

const createSchema = z.object({
	name: z.string().trim().min(2, 'Name the instrument or PC that will use it.').max(80),
	read: z.literal('on').optional()
});

export const actions: Actions = {
	create: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(event.request, createSchema);
		if (!form.ok) return form.failure;
		const scopes = form.data.read ? [...TOKEN_SCOPES] : (['measurements:write'] as const);
		const { secret } = await createToken(project.id, form.data.name, [...scopes], user.id);
		return { created: { name: form.data.name, secret } };
	},
	revoke: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(
			event.request,
			z.object({ id: z.coerce.number().int().positive() })
		);
		if (!form.ok) return form.failure;
		if (!(await revokeToken(project.id, form.data.id, user.id))) {
			return fail(404, { problem: 'That token does not exist or is already revoked.' });
		}
		return { revoked: true };
	}
};
