import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { requireProject } from '$lib/server/access';
import {
	constantForm,
	createConstantCalibration,
	createLampCalibration,
	lampForm,
	MAX_LAMP_BYTES,
	createReferenceCalibration,
	referenceForm,
	retireCalibration
} from '$lib/server/calibrations';
import { parseForm } from '$lib/server/forms';
import { InstrumentError } from '$lib/server/instruments';

/**
 * The profile page's calibration actions. A failure names its form (`calibration`) so the page
 * shows the errors beside that form and not beside the profile editor.
 */

type Which = 'constant' | 'reference' | 'lamp';

export function profileId(raw: string): number {
	const id = Number(raw);
	if (!Number.isSafeInteger(id) || id <= 0) error(404, 'Not found');
	return id;
}

async function add(event: RequestEvent, which: Which) {
	const { project, user } = await requireProject(event, 'upload');
	const id = profileId(event.params.profile ?? '');
	try {
		if (which === 'constant') {
			const form = await parseForm(event.request, constantForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			await createConstantCalibration(project.id, id, form.data, user.id);
		} else if (which === 'lamp') {
			// The file is not a text field: read it from a copy of the body parseForm consumes.
			const copy = event.request.clone();
			const form = await parseForm(event.request, lampForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			const file = (await copy.formData()).get('lamp');
			const refuse = (message: string) =>
				fail(400, { calibration: which, errors: { lamp: [message] }, values: form.data });
			if (!(file instanceof File) || file.size === 0)
				return refuse('Choose the lamp spectrum file (shift or wavelength, counts).');
			if (file.size > MAX_LAMP_BYTES) return refuse('The lamp file is larger than 5 MB.');
			await createLampCalibration(
				project.id,
				id,
				form.data,
				{ name: file.name, text: await file.text() },
				user.id
			);
		} else {
			const form = await parseForm(event.request, referenceForm);
			if (!form.ok) return fail(400, { calibration: which, ...form.failure.data });
			await createReferenceCalibration(project.id, id, form.data, user.id);
		}
	} catch (err) {
		if (err instanceof InstrumentError) {
			if (err.status === 404) error(404, 'Not found');
			return fail(err.status, {
				calibration: which,
				errors: { [err.field]: [err.message] },
				values: {} as Record<string, string>
			});
		}
		throw err;
	}
	redirect(303, `/projects/${project.slug}/instruments/${id}?calibrated=1#calibrations`);
}

export const calibrationActions = {
	addConstant: (event: RequestEvent) => add(event, 'constant'),
	addReference: (event: RequestEvent) => add(event, 'reference'),
	addLamp: (event: RequestEvent) => add(event, 'lamp'),
	retire: async (event: RequestEvent) => {
		const { project, user } = await requireProject(event, 'upload');
		const id = profileId(event.params.profile ?? '');
		const calibrationId = Number((await event.request.formData()).get('id'));
		if (!Number.isSafeInteger(calibrationId) || calibrationId <= 0) error(404, 'Not found');
		try {
			await retireCalibration(project.id, id, calibrationId, user.id);
		} catch (err) {
			if (err instanceof InstrumentError && err.status === 404) error(404, 'Not found');
			throw err;
		}
		redirect(303, `/projects/${project.slug}/instruments/${id}#calibrations`);
	}
};
