import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { can } from '$lib/roles';
import { requireProject } from '$lib/server/access';
import { parseForm } from '$lib/server/forms';
import {
	createSeries,
	listSeries,
	SeriesError,
	seriesForm,
	updateSeries,
	type SeriesInput
} from '$lib/server/series-store';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	return { series: await listSeries(project.id) };
};

const failed = (err: unknown, values: Record<string, unknown>) => {
	if (err instanceof SeriesError)
		return fail(err.status, { errors: { [err.field]: [err.message] }, values });
	throw err;
};

const editForm = seriesForm.and(z.object({ id: z.coerce.number().int().positive() }));

export const actions: Actions = {
	create: async (event) => {
		const { project, user, role } = await requireProject(event, 'upload');
		const form = await parseForm(event.request, seriesForm);
		if (!form.ok) return form.failure;
		const input: SeriesInput = can(role, 'manage')
			? form.data
			: { ...form.data, lower_spec_k: null, upper_spec_k: null };
		try {
			await createSeries(project.id, input, { userId: user.id });
		} catch (err) {
			return failed(err, form.data);
		}
		redirect(303, `/projects/${project.slug}/series/${encodeURIComponent(input.name)}`);
	},
	update: async (event) => {
		const { project, user, role } = await requireProject(event, 'upload');
		const form = await parseForm(event.request, editForm);
		if (!form.ok) return form.failure;
		try {
			await updateSeries(
				project.id,
				form.data.id,
				form.data,
				{ userId: user.id },
				can(role, 'manage')
			);
		} catch (err) {
			return failed(err, form.data);
		}
		redirect(303, `/projects/${project.slug}/series`);
	}
};
