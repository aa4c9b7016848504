import { redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { requireUser } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import { createProject, projectsOf } from '$lib/server/projects';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	return { projects: await projectsOf(user.id) };
};

const schema = z.object({
	name: z.string().trim().min(2, 'Give the project a name of at least two characters.').max(100),
	description: z.string().trim().max(500).default('')
});

export const actions: Actions = {
	create: async (event) => {
		const user = requireUser(event);
		const form = await parseForm(event.request, schema);
		if (!form.ok) return form.failure;
		const project = await createProject(user.id, form.data.name, form.data.description);
		redirect(303, `/projects/${project.slug}`);
	}
};
