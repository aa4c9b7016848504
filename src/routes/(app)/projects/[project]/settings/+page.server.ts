import { z } from 'zod';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import { updateProjectSettings } from '$lib/server/project-settings';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'manage');
	return {
		settings: {
			name: project.name,
			description: project.description,
			signOffRequired: project.signOffRequired
		}
	};
};

const settingsSchema = z.object({
	name: z.string().trim().min(2, 'Give the project a name of at least two characters.').max(120),
	description: z.string().trim().max(2000, 'Keep the description under 2000 characters.'),
	// An unticked checkbox is simply absent from the form.
	signOffRequired: z
		.string()
		.optional()
		.transform((v) => v === 'on')
});

export const actions: Actions = {
	save: async (event) => {
		const { project, user } = await requireProject(event, 'manage');
		const form = await parseForm(event.request, settingsSchema);
		if (!form.ok) return form.failure;
		const { changed } = await updateProjectSettings(project.id, form.data, user.id);
		return { saved: true, changed };
	}
};
