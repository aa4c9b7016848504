import { error, fail, redirect } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import { listCalibrations } from '$lib/server/calibrations';
import { parseForm } from '$lib/server/forms';
import { editProfile, InstrumentError, profileForm, profileOf } from '$lib/server/instruments';
import { calibrationActions, profileId } from './calibration-actions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const found = await profileOf(project.id, profileId(event.params.profile));
	if (!found) error(404, 'Not found');
	return { ...found, calibrations: await listCalibrations(found.profile.id) };
};

export const actions: Actions = {
	...calibrationActions,
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
