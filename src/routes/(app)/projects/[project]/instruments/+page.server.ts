import { fail, redirect } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import { createProfile, InstrumentError, listProfiles, profileForm } from '$lib/server/instruments';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	return { profiles: await listProfiles(project.id) };
};

export const actions: Actions = {
	create: async (event) => {
		const { project, user } = await requireProject(event, 'upload');
		const form = await parseForm(event.request, profileForm);
		if (!form.ok) return form.failure;
		let id: number;
		try {
			id = (await createProfile(project.id, form.data, user.id)).profile.id;
		} catch (err) {
			if (err instanceof InstrumentError)
				return fail(err.status, { errors: { [err.field]: [err.message] }, values: form.data });
			throw err;
		}
		redirect(303, `/projects/${project.slug}/instruments/${id}`);
	}
};
