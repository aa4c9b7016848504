import { fail } from '@sveltejs/kit';
import { builtInMaterials } from '$lib/materials';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import {
	addMaterial,
	InstrumentError,
	listProjectMaterials,
	materialForm
} from '$lib/server/instruments';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	return { builtIn: builtInMaterials(), own: await listProjectMaterials(project.id) };
};

export const actions: Actions = {
	add: async (event) => {
		const { project, user } = await requireProject(event, 'upload');
		const form = await parseForm(event.request, materialForm);
		if (!form.ok) return form.failure;
		try {
			const row = await addMaterial(project.id, form.data, user.id);
			return { added: row.key };
		} catch (err) {
			if (err instanceof InstrumentError)
				return fail(err.status, { errors: { [err.field]: [err.message] }, values: {} });
			throw err;
		}
	}
};
