import { error, fail, redirect } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import { editProfile, InstrumentError, profileForm, profileOf } from '$lib/server/instruments';
import type { Actions, PageServerLoad } from './$types';

function profileId(raw: string): number {
	const id = Number(raw);
	if (!Number.isSafeInteger(id) || id <= 0) error(404, 'Not found');
	return id;
}

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const found = await profileOf(project.id, profileId(event.params.profile));
	if (!found) error(404, 'Not found');
	return found;
};

export const actions: Actions = {
	edit: async (event) => {
		const { project, user } = await requireProject(event, 'upload');
		const id = profileId(event.params.profile);
		const form = await parseForm(event.request, profileForm);
		if (!form.ok) return form.failure;
		try {
			await editProfile(project.id, id, form.data, user.id);
		} catch (err) {
			if (err instanceof InstrumentError) {
				if (err.status === 404) error(404, 'Not found');
				return fail(err.status, { errors: { [err.field]: [err.message] }, values: form.data });
			}
			throw err;
		}
		redirect(303, `/projects/${project.slug}/instruments/${id}?saved=1`);
	}
};
